#!/usr/bin/python3
"""An independent fit for core/extract's check (TestAgreesWithSciPy).

It writes scipy_data.csv: drain currents of the 1995 EKV interpolation
(Enz, Krummenacher and Vittoz, Analog Integrated Circuits and Signal
Processing 8, 1995), ID = IS*[ln^2(1+e^((VP-VS)/2UT)) - ln^2(1+e^((VP-VD)/2UT))],
VP = (VG - VT0)/n, bulk-referred, with invented values n = 1.4, VT0 = 0.5 V,
IS = 2*n*kp*(W/L)*UT^2, kp = 250 uA/V^2 (no noise: the mismatch between the
two models is the residual).

Then it writes Stagewright's own model (core/device/model.go, charge.go, and
the DIBL form of the project's contract) again from its equations in numpy --
the charge from v = 2q + ln q by scipy.special.wrightomega, the pinch-off
voltage with the smooth positive part of width 50 mV, the slope factor, the
mobility divisor, channel-length modulation and DIBL -- and fits thresh,
mobility, body and mobred to ln ID over the points above the current floor
(1 pA or 1e-6 of the largest current) with scipy.optimize.least_squares on
the same transformed parameters (log of the positive ones) and bounds.
The result goes to scipy_result.json.

Run: /usr/bin/python3 testdata/fit/scipy_fit.py  (Debian python3-numpy,
python3-scipy), from the repository root or this directory.
"""
import json
import os

import numpy as np
from scipy.optimize import least_squares
from scipy.special import wrightomega

HERE = os.path.dirname(os.path.abspath(__file__))
K, Q, EPS0 = 1.380649e-23, 1.602176634e-19, 8.8541878128e-12
T = 300.15
UT = K * T / Q

# The grid: VGS x VDS x VBS at two lengths, VBS = 0 (the 1995 form's body
# effect through a constant n is not the model's, and a fit of both pushes 2phiF
# to its bound), W = 5 um, 27 C.
W = 5e-6
LS = [0.5e-6, 2e-6]
VBS = [0.0]
VDS = [0.05, 0.2, 0.6, 1.2, 1.8]
VGS = [round(0.05 * k, 6) for k in range(1, 37)]


def ekv1995(vgs, vds, vbs, l, n=1.4, vt0=0.5, kp=250e-6):
    vg, vs, vd = vgs - vbs, -vbs, vds - vbs
    vp = (vg - vt0) / n
    a = np.logaddexp(0, (vp - vs) / (2 * UT))
    b = np.logaddexp(0, (vp - vd) / (2 * UT))
    return 2 * n * kp * (W / l) * UT ** 2 * (a * a - b * b)


rows = []
for l in LS:
    for vb in VBS:
        for vd in VDS:
            for vg in VGS:
                rows.append((vg, vd, vb, float(ekv1995(vg, vd, vb, l)), W, l, 27.0))
data = np.array(rows)
with open(os.path.join(HERE, "scipy_data.csv"), "w") as f:
    f.write("# Invented data of the 1995 EKV interpolation; see scipy_fit.py\n")
    f.write("vgs,vds,vbs,id,w,l,temp\n")
    for r in rows:
        f.write("%.6g,%.6g,%.6g,%r,%.6g,%.6g,%.6g\n" % r)
# Read back what the file holds, so both fits see the same numbers.
data = np.loadtxt(os.path.join(HERE, "scipy_data.csv"), delimiter=",", comments="#", skiprows=2)
vgs, vds, vbs, idd, w, l, tc = data.T

# The base process's values for everything not fitted (d180 n-channel,
# core/device/params.go), with CLM, velocity saturation and DIBL off.
TOX, PHI = 4.1e-9, 0.85
LAMBDAL, ECRIT, DIBL = 0.0, 0.0, 0.0
COX = 3.9 * EPS0 / TOX
SMOOTH = 0.05


def charge(v):
    # q solves v = 2q + ln q: 2q = omega(v + ln 2) (Wright omega).
    return 0.5 * np.real(wrightomega(np.maximum(v, -700) + np.log(2)))


def model(vt0, u0, gamma, theta, phi=PHI):
    sigma = DIBL / l
    vg = vgs - vbs + sigma * np.abs(vds)
    vs = -vbs
    vd = vds - vbs
    x = vg - vt0 + phi + gamma * np.sqrt(phi)
    s = SMOOTH * np.logaddexp(0, x / SMOOTH)
    s = np.maximum(s, 1e-300)
    sp = s / (np.sqrt(s + gamma ** 2 / 4) + gamma / 2)
    vp = s - phi - gamma * sp
    n = 1 + gamma / (2 * np.sqrt(sp * sp + 4 * UT))
    qf, qr = charge((vp - vs) / UT), charge((vp - vd) / UT)
    th = theta + (1 / (ECRIT * l) if ECRIT > 0 else 0)
    mob = 1 + th * UT * n * (qf + qr)
    clm = 1 + LAMBDAL / l * np.abs(vds)
    ispec = n * 2 * u0 * COX * (w / l) * UT ** 2
    return ispec * (qf - qr) * (qf + qr + 1) * clm / mob


floor = max(1e-12, 1e-6 * idd.max())
use = (idd > floor) & (vds > 0)
vgs, vds, vbs, idd, w, l, tc = (a[use] for a in (vgs, vds, vbs, idd, w, l, tc))

# Transformed parameters: thresh as it is, the log of mobility, body and
# mobred;
# bounds are core/extract's (Params.Validate's ranges).
lo = np.array([-1, np.log(1e-4), np.log(1e-3), np.log(1e-4)])
hi = np.array([2, np.log(1.0), np.log(5.0), np.log(10.0)])


def unpack(x):
    return x[0], np.exp(x[1]), np.exp(x[2]), np.exp(x[3])


def resid(x):
    i = model(*unpack(x))
    return np.log(np.maximum(i, 1e-300)) - np.log(idd)


x0 = np.array([0.45, np.log(0.030), np.log(0.45), np.log(0.25)])  # the base's values
sol = least_squares(resid, x0, bounds=(lo, hi), method="trf", x_scale="jac",
                    ftol=1e-14, xtol=1e-14, gtol=1e-14, max_nfev=2000)
vt0, u0, gamma, theta = unpack(sol.x)
out = {
    "source": "scipy.optimize.least_squares (trf) on testdata/fit/scipy_data.csv; see scipy_fit.py",
    "points": int(use.sum()),
    "floor": floor,
    "cost": float(sol.cost),  # 1/2 * sum of squared ln ID residuals
    "nfev": int(sol.nfev),
    "status": int(sol.status),
    "params": {"thresh": vt0, "mobility": u0, "body": gamma, "mobred": theta},
}
with open(os.path.join(HERE, "scipy_result.json"), "w") as f:
    json.dump(out, f, indent=1)
    f.write("\n")
print(json.dumps(out, indent=1))
