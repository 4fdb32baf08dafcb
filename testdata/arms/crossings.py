#!/usr/bin/python3
"""Reference crossings of spiral-arm centre lines with lines of sight from the Sun.

Writes crossings.json next to this script; arms/crossing_test.go reads it.

Independent of the Go code: the centre line is evaluated from an antiderivative of tan(psi)
written afresh here (package model, section Arms: ln R(beta) = ln R_ref - integral of
tan psi from beta_ref to beta), the grid is 40001 points per line of sight, and every root is refined with
scipy.optimize.brentq. Lengths kpc, angles radians (degrees only to state the cases).

Run: /usr/bin/python3 testdata/arms/crossings.py
"""
import json
import math
import os

import numpy as np
from scipy.optimize import brentq

R0 = 8.2
DMAX = 22.0
NGRID = 40001
D2R = math.pi / 180


def arm(name, rref, bref, pitch, bstart, bend, width, pitch2=None, bkink=None):
    a = {"Name": name, "RRef": rref, "BetaRef": bref * D2R, "Pitch": pitch * D2R,
         "Kinked": pitch2 is not None, "Pitch2": 0.0, "BetaKink": 0.0,
         "BetaStart": bstart * D2R, "BetaEnd": bend * D2R, "Width": width}
    if pitch2 is not None:
        a["Pitch2"] = pitch2 * D2R
        a["BetaKink"] = bkink * D2R
    return a


# Invented arms of the model galaxy: one plain, one kinked with beta_ref below the kink, one
# spanning more than a full turn, one kinked with beta_ref above the kink.
ARMS = [
    arm("Corvid", 7.0, 0.0, 12.0, -60.0, 200.0, 0.3),
    arm("Lantern", 9.5, 20.0, 9.0, -80.0, 250.0, 0.25, pitch2=18.0, bkink=70.0),
    arm("Tamarisk", 12.0, -30.0, 7.0, -100.0, 540.0, 0.2),
    arm("Halcyon", 6.0, 100.0, 16.0, -40.0, 220.0, 0.35, pitch2=10.0, bkink=30.0),
]
LONGITUDES = [0.5, 10, 25, 45, 70, 90, 120, 160, 180, 200, 240, 280, 310, 335, 355]


def antiderivative(a, b):
    """A function G with G' = tan psi(b), psi = Pitch below BetaKink and Pitch2 from it on."""
    t1 = math.tan(a["Pitch"])
    if not a["Kinked"]:
        return t1 * b
    t2 = math.tan(a["Pitch2"])
    k = a["BetaKink"]
    return t1 * np.minimum(b, k) + t2 * (np.maximum(b, k) - k)


def ln_radius(a, b):
    return math.log(a["RRef"]) - (antiderivative(a, b) - antiderivative(a, a["BetaRef"]))


def galactocentric(d, l):
    x, y = d * math.cos(l), d * math.sin(l)
    return np.hypot(R0 - x, y), np.arctan2(y, R0 - x)


def crossings(a, l):
    out = []
    d = np.linspace(0.0, DMAX, NGRID)
    R, beta = galactocentric(d, l)
    for n in range(-4, 5):
        shift = 2 * math.pi * n

        def f(x):
            r, b = galactocentric(x, l)
            return math.log(r) - ln_radius(a, b + shift)

        g = np.log(R) - ln_radius(a, beta + shift)
        for i in np.nonzero(g[:-1] * g[1:] < 0)[0]:
            root = brentq(f, d[i], d[i + 1], xtol=1e-14, rtol=1e-15, maxiter=200)
            r, b = galactocentric(root, l)
            bn = float(b) + shift
            if a["BetaStart"] <= bn <= a["BetaEnd"] and 0 < root <= DMAX:
                out.append([root, bn, float(r)])
        # Warn about grazing lines of sight, where two roots may hide between grid points.
        m = np.abs(g)
        same = (g[:-2] * g[1:-1] > 0) & (g[1:-1] * g[2:] > 0)
        interior = same & (m[1:-1] < m[:-2]) & (m[1:-1] < m[2:]) & (m[1:-1] < 1e-3)
        if interior.any():
            print("warning: near-grazing", a["Name"], math.degrees(l), n)
    out.sort()
    return out


def main():
    lines = []
    for a in ARMS:
        for ldeg in LONGITUDES:
            l = ldeg * D2R
            lines.append({"Arm": a["Name"], "L": l, "Crossings": crossings(a, l)})
    doc = {"R0": R0, "DMax": DMAX, "Arms": ARMS, "Lines": lines}
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "crossings.json")
    with open(path, "w") as fh:
        json.dump(doc, fh, indent=1)
        fh.write("\n")
    print("wrote", path, sum(len(x["Crossings"]) for x in lines), "crossings")


if __name__ == "__main__":
    main()
