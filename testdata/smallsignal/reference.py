#!/usr/bin/python3
"""Independent NumPy/SciPy reference for Stagewright's small-signal analysis.

Run from the repository root, after regenerating the networks:

    STAGEWRIGHT_WRITE_REFERENCE=1 go test ./core/design -run TestWriteReference
    /usr/bin/python3 testdata/smallsignal/reference.py

(Debian's interpreter, with its numpy and scipy packages.) For every
<name>.json here (a linearized network: G in S, C in F, row-major rows, the
coupling gsig/csig to the signal node, the output index and the sweep
frequencies in Hz) it writes <name>.scipy.json with

  h_re, h_im          H(jw) = v[out] for (G + jwC) v = -(gsig + jw csig),
                      w = 2*pi*f, by numpy.linalg.solve;
  poles_re, poles_im  finite generalized eigenvalues s of (G, -C), i.e. the
                      roots of det(G + sC) = 0, rad/s, by scipy.linalg.eig;
  zeros_re, zeros_im  the same for the bordered pencil
                      [[G, -gsig], [e_out^T, 0]] + s [[C, -csig], [0, 0]].

Eigenvalues that are inf or nan, or larger than 1e15 rad/s in magnitude
(infinite roots of a singular C, returned by QZ as huge numbers), are
dropped. The output is committed, so the Go tests need no Python.
"""

import glob
import json
import os

import numpy as np
import scipy.linalg

HERE = os.path.dirname(os.path.abspath(__file__))
INFINITE = 1e15  # rad/s; every finite root of these stages is far below


def finite_eigenvalues(a, b):
    """Finite s with det(a + s b) = 0, sorted by magnitude."""
    lam = scipy.linalg.eig(a, -b, right=False)
    keep = np.isfinite(lam) & (np.abs(lam) <= INFINITE)
    lam = lam[keep]
    return lam[np.argsort(np.abs(lam), kind="stable")]


def analyse(net):
    n = net["n"]
    out = net["out"]
    g = np.array(net["g"], dtype=float).reshape(n, n)
    c = np.array(net["c"], dtype=float).reshape(n, n)
    gsig = np.array(net["gsig"], dtype=float)
    csig = np.array(net["csig"], dtype=float)
    f = np.array(net["f"], dtype=float)

    h = np.empty(len(f), dtype=complex)
    for k, fk in enumerate(f):
        w = 2 * np.pi * fk
        v = np.linalg.solve(g + 1j * w * c, -(gsig + 1j * w * csig))
        h[k] = v[out]

    poles = finite_eigenvalues(g, c)

    m = n + 1
    gb = np.zeros((m, m))
    cb = np.zeros((m, m))
    gb[:n, :n] = g
    cb[:n, :n] = c
    gb[:n, n] = -gsig
    cb[:n, n] = -csig
    gb[n, out] = 1.0
    zeros = finite_eigenvalues(gb, cb)

    result = {
        "h_re": h.real.tolist(),
        "h_im": h.imag.tolist(),
        "poles_re": poles.real.tolist(),
        "poles_im": poles.imag.tolist(),
        "zeros_re": zeros.real.tolist(),
        "zeros_im": zeros.imag.tolist(),
    }
    for key, values in result.items():
        if not all(np.isfinite(values)):
            raise ValueError("%s: %s is not finite" % (net["fragment"], key))
    return result


def main():
    paths = sorted(p for p in glob.glob(os.path.join(HERE, "*.json"))
                   if not p.endswith(".scipy.json"))
    if not paths:
        raise SystemExit("no <name>.json networks in %s; run the Go generator first" % HERE)
    for path in paths:
        with open(path) as fh:
            net = json.load(fh)
        result = analyse(net)
        dest = path[: -len(".json")] + ".scipy.json"
        with open(dest, "w") as fh:
            # json writes repr(float), which reads back as the same float64.
            json.dump(result, fh, indent=1)
            fh.write("\n")
        print("%s: n = %d, %d poles, %d zeros" % (
            os.path.basename(dest), net["n"], len(result["poles_re"]), len(result["zeros_re"])))


if __name__ == "__main__":
    main()
