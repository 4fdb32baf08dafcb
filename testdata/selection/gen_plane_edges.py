#!/usr/bin/python3
"""Reference values for the unseen longitudes of the Galactic plane (model/selplane.go).

Run with Debian's python3-astropy, python3-scipy and python3-numpy:

    /usr/bin/python3 testdata/selection/gen_plane_edges.py

It writes plane_edges.json next to this script: for a few declination bands [lower, upper]
(deg), the ranges [from, to] of Galactic longitude (deg, from toward increasing l, through
0 when from > to) whose directions at b = 0 have a declination outside the band, with the
limit that cuts them ("south" below the lower limit, "north" above the upper). Every
declination comes from astropy's Galactic -> ICRS transformation: l is scanned at 0.1 deg
and every crossing of a limit refined with SciPy's brentq.
"""
import json
import os

import astropy
import astropy.units as u
import numpy as np
import scipy
from astropy.coordinates import SkyCoord
from scipy.optimize import brentq


def dec_of(l_deg):
    c = SkyCoord(l=l_deg * u.deg, b=0.0 * u.deg, frame="galactic").icrs
    return c.dec.deg


def unseen(lo, hi):
    ls = np.linspace(0.0, 360.0, 3601)
    decs = dec_of(ls)
    cuts = [0.0, 360.0]
    for lim in (lo, hi):
        g = decs - lim
        for k in range(len(ls) - 1):
            if g[k] * g[k + 1] < 0:
                cuts.append(brentq(lambda l: float(dec_of(l)) - lim, ls[k], ls[k + 1], xtol=1e-12, rtol=1e-14))
    cuts = sorted(set(cuts))
    runs = []
    for a, b in zip(cuts[:-1], cuts[1:]):
        mid = float(dec_of(0.5 * (a + b)))
        cause = "south" if mid < lo else "north" if mid > hi else ""
        if runs and runs[-1][2] == cause:
            runs[-1][1] = b
        else:
            runs.append([a, b, cause])
    if len(runs) > 1 and runs[0][2] == runs[-1][2]:
        runs[-1][1] = runs[0][1]
        runs = runs[1:]
    return [{"from": a, "to": b, "cause": c} for a, b, c in runs if c]


def main():
    bands = []
    for lo, hi in ((-30.0, 90.0), (-90.0, 40.0), (-35.0, 20.0), (-50.0, 50.0), (10.0, 15.0),
                   (-70.0, 90.0), (70.0, 90.0), (-90.0, -40.0)):
        bands.append({"lower": lo, "upper": hi, "gaps": unseen(lo, hi)})
    out = {
        "versions": {"astropy": astropy.__version__, "numpy": np.__version__, "scipy": scipy.__version__},
        "bands": bands,
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "plane_edges.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
