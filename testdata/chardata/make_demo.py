#!/usr/bin/python3
"""Writes the demo characterization files of testdata/chardata.

DEMO DATA, invented: transistor sweeps of an imaginary 180 nm-class process
("demo fab"), for trying Stagewright's fit and its tests. They describe no
real process.

The currents come from a model whose equations differ from Stagewright's
own, so that a fit of them is not a round trip:

- the 1995 EKV interpolation (Enz, Krummenacher and Vittoz, Analog
  Integrated Circuits and Signal Processing 8, 1995),
  ID = IS*[ln^2(1+e^((VP-VS)/2UT)) - ln^2(1+e^((VP-VD)/2UT))],
  with a constant slope factor n and VP = (VG - VT)/n, bulk-referred;
- a threshold that rolls off at short length and falls with the drain
  voltage, VT = VT0 + body - dVT*exp(-L/l_roll) - eta*(L0/L)*VDS, with the
  body effect gamma*(sqrt(phi+VSB) - sqrt(phi));
- channel-length modulation as a factor (1 + VDS/(VA*L/L0)), an Early
  voltage that grows with L;
- mobility reduction and velocity saturation as the divisor
  1 + theta*max(VGS-VT, 0) + VDS_eff/(EC*L), VDS_eff = VDS*tanh-like limit
  at the saturation voltage.

Each current gets 1 % Gaussian noise (seeded: the files are the same on
every run) and a floor of 1 pA of noise, as a probe station would give.

Run: /usr/bin/python3 testdata/chardata/make_demo.py  (Debian python3-numpy)
from the repository root or this directory.
"""
import os

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
K, Q = 1.380649e-23, 1.602176634e-19


def current(vgs, vds, vsb, l, w, temp_c, p):
    """Drain current magnitude of the demo device (n-type normalized)."""
    t = temp_c + 273.15
    ut = K * t / Q
    l0 = 180e-9
    body = p["gamma"] * (np.sqrt(p["phi"] + vsb) - np.sqrt(p["phi"]))
    vt = (p["vt0"] + body - p["dvt"] * np.exp(-l / p["lroll"])
          - p["eta"] * (l0 / l) * vds - p["tc"] * (t - 300.15))
    n = p["n"]
    vg, vs, vd = vgs + vsb, vsb, vds + vsb  # bulk-referred
    vp = (vg - vsb - vt) / n + vs
    a = np.logaddexp(0, (vp - vs) / (2 * ut))
    b = np.logaddexp(0, (vp - vd) / (2 * ut))
    kp = p["kp"] * (t / 300.15) ** p["bex"]
    i0 = 2 * n * kp * (w / l) * ut ** 2 * (a * a - b * b)
    vov = np.maximum(vgs - vt, 0)
    vdsat = 2 * n * ut * np.logaddexp(0, vov / (2 * n * ut))
    vds_eff = vds / np.sqrt(1 + (vds / np.maximum(vdsat, 1e-3)) ** 2)
    div = 1 + p["theta"] * vov + vds_eff / (p["ec"] * l)
    clm = 1 + vds / (p["va"] * l / l0)
    return i0 * clm / div


NMOS = dict(vt0=0.47, dvt=0.06, lroll=120e-9, eta=0.025, tc=0.9e-3, gamma=0.5,
            phi=0.8, n=1.32, kp=280e-6, bex=-1.5, theta=0.22, ec=5e6, va=6.0)
PMOS = dict(vt0=0.44, dvt=0.05, lroll=130e-9, eta=0.03, tc=1.1e-3, gamma=0.42,
            phi=0.78, n=1.36, kp=70e-6, bex=-1.3, theta=0.18, ec=1.4e7, va=5.0)

W = 10e-6
LS = [180e-9, 350e-9, 1e-6, 4e-6]
VGS_STEPS = [round(0.05 * k, 4) for k in range(0, 37)]        # 0 ... 1.8 V
VDS_FOR_ID = [0.05, 0.9, 1.8]
VGS_FOR_GDS = [0.6, 0.9, 1.3, 1.8]
VDS_STEPS = [round(0.1 * k, 4) for k in range(1, 19)]         # 0.1 ... 1.8 V


def rows(p, rng):
    seen = set()
    out = []
    for l in LS:
        grid = [(vg, vd) for vd in VDS_FOR_ID for vg in VGS_STEPS]
        grid += [(vg, vd) for vg in VGS_FOR_GDS for vd in VDS_STEPS]
        for vg, vd in grid:
            if (l, vg, vd) in seen:
                continue
            seen.add((l, vg, vd))
            i = current(vg, vd, 0.0, l, W, 27.0, p)
            i = i * (1 + 0.01 * rng.standard_normal()) + 1e-12 * rng.standard_normal()
            out.append((vg, vd, i, l))
    return out


def num(v):
    """A voltage as the file writes it: 0 without a sign."""
    return "0" if v == 0 else "%.4g" % v


def write(name, pol, p, seed):
    rng = np.random.default_rng(seed)
    s = -1 if pol == "p" else 1
    path = os.path.join(HERE, name)
    with open(path, "w") as f:
        f.write("# DEMO DATA, invented: %s-type device of the imaginary 'demo fab' 180 nm-class\n" % pol)
        f.write("# process, made by testdata/chardata/make_demo.py from a model that is not\n")
        f.write("# Stagewright's own. W = 10 um, 27 C, VBS = 0; VGS, VDS, ID in V and A%s.\n"
                % (", signed as a simulator writes a p-type device" if pol == "p" else ""))
        f.write("vgs,vds,id,l,w\n")
        for vg, vd, i, l in rows(p, rng):
            f.write("%s,%s,%.6e,%s,10u\n" % (num(s * vg), num(s * vd), s * i, {180e-9: "180n", 350e-9: "350n", 1e-6: "1u", 4e-6: "4u"}[l]))
    print("wrote", path)


write("demo_n.csv", "n", NMOS, 11)
write("demo_p.csv", "p", PMOS, 12)
