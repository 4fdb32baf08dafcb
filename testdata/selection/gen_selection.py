#!/usr/bin/python3
"""Reference values for the survey selection of package model (model/selection.go).

Run with Debian's python3-astropy, python3-scipy and python3-numpy:

    /usr/bin/python3 testdata/selection/gen_selection.py

It writes selection_reference.json next to this script:

  points     random Galactic directions (l, b, deg) and their ICRS declination (deg), from
             astropy's Galactic -> ICRS transformation
  bands      for a few longitudes l and declination bands [lower, upper] (deg), the
             intervals of Galactic latitude b (deg, within [-90, 90]) whose declination
             lies in the band: found by scanning b on a fine grid with astropy and
             refining every crossing of a band limit with SciPy's brentq
  versions   the library versions used

The script does not use the closed form sin(dec) = A sin b + B cos b of the Go code: every
declination comes from astropy's frame transformation.
"""
import json
import os

import astropy
import astropy.units as u
import numpy as np
import scipy
from astropy.coordinates import SkyCoord
from scipy.optimize import brentq


def dec_of(l_deg, b_deg):
    c = SkyCoord(l=l_deg * u.deg, b=b_deg * u.deg, frame="galactic").icrs
    return c.dec.deg


def band_latitudes(l_deg, lo, hi):
    # A fine scan; every sign change of dec - limit is refined with brentq.
    bs = np.linspace(-90.0, 90.0, 3601)
    decs = dec_of(np.full_like(bs, l_deg), bs)
    cuts = [-90.0, 90.0]
    for lim in (lo, hi):
        g = decs - lim
        for k in range(len(bs) - 1):
            if g[k] == 0.0:
                cuts.append(float(bs[k]))
            elif g[k] * g[k + 1] < 0:
                cuts.append(brentq(lambda b: float(dec_of(l_deg, b)) - lim, bs[k], bs[k + 1], xtol=1e-12, rtol=1e-14))
    cuts = sorted(set(cuts))
    out = []
    for b1, b2 in zip(cuts[:-1], cuts[1:]):
        mid = float(dec_of(l_deg, 0.5 * (b1 + b2)))
        if lo <= mid <= hi:
            if out and out[-1][1] == b1:
                out[-1][1] = b2
            else:
                out.append([b1, b2])
    return out


def main():
    rng = np.random.default_rng(20261202)
    n = 200
    ls = rng.uniform(0, 360, n)
    bs = np.degrees(np.arcsin(rng.uniform(-1, 1, n)))
    decs = dec_of(ls, bs)
    points = [{"l": float(a), "b": float(b), "dec": float(d)} for a, b, d in zip(ls, bs, decs)]

    bands = []
    for l_deg in (0.0, 30.0, 90.0, 122.93, 180.0, 237.0, 300.0, 359.5):
        for lo, hi in ((-30.0, 90.0), (-90.0, -35.0), (-35.0, 60.0), (10.0, 20.0), (-90.0, 90.0), (60.0, 90.0)):
            bands.append({"l": l_deg, "lower": lo, "upper": hi, "intervals": band_latitudes(l_deg, lo, hi)})

    out = {
        "versions": {"astropy": astropy.__version__, "numpy": np.__version__, "scipy": scipy.__version__},
        "points": points,
        "bands": bands,
    }
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "selection_reference.json")
    with open(path, "w") as f:
        json.dump(out, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
