#!/usr/bin/python3
"""Reference values for the mirabilis prior package (model/prior), from SciPy.

Run with Debian's /usr/bin/python3 (python3-scipy, python3-numpy) from this
folder:

    /usr/bin/python3 priors_scipy.py > priors_scipy.json

The Go tests in model/prior read priors_scipy.json; they never run Python.
Each prior is given by its expression in the mirabilis syntax and by the
scipy.stats distribution it corresponds to:

    uniform(a, b)                 scipy.stats.uniform(loc=a, scale=b-a)
    normal(mu, s)                 scipy.stats.norm(loc=mu, scale=s)
    truncnormal(mu, s, a, b)      scipy.stats.truncnorm((a-mu)/s, (b-mu)/s, loc=mu, scale=s)
    loguniform(a, b)              scipy.stats.loguniform(a, b)

A log density of -inf (outside the support) is written as null.
"""
import json
import math
import sys

import numpy as np
import scipy
import scipy.special
import scipy.stats as st


def dist(name, args):
    if name == "uniform":
        a, b = args
        return st.uniform(loc=a, scale=b - a)
    if name == "normal":
        mu, s = args
        return st.norm(loc=mu, scale=s)
    if name == "truncnormal":
        mu, s, a, b = args
        return st.truncnorm((a - mu) / s, (b - mu) / s, loc=mu, scale=s)
    if name == "loguniform":
        a, b = args
        return st.loguniform(a, b)
    raise ValueError(name)


def expr(name, args):
    return "%s(%s)" % (name, ", ".join(repr(float(a)).rstrip("0").rstrip(".") if float(a).is_integer() else repr(float(a)) for a in args))


def num(v):
    v = float(v)
    if math.isinf(v) and v < 0:
        return None
    return v


CASES = [
    ("uniform", (5, 12), [4.0, 5.0, 6.3, 11.999, 12.0, 12.5]),
    ("uniform", (-30, 30), [-31.0, -30.0, 0.0, 17.5, 30.0]),
    ("normal", (8.2, 0.4), [6.0, 7.5, 8.2, 8.9, 11.0]),
    ("normal", (0, 10), [-60.0, -5.0, 0.0, 3.3, 45.0]),
    ("normal", (-5, 10), [-100.0, -5.0, 20.0]),
    ("truncnormal", (8.2, 0.4, 6, 10), [5.9, 6.0, 7.7, 8.2, 9.5, 10.0, 10.1]),
    ("truncnormal", (0, 1, 5, 9), [4.9, 5.0, 5.1, 6.0, 8.9, 9.0]),
    ("truncnormal", (0, 1, -9, -5), [-9.0, -7.0, -5.2, -5.0, -4.0]),
    ("truncnormal", (10, 2, -3, 1), [-3.0, 0.0, 0.9, 1.0, 1.5]),
    ("truncnormal", (0, 5, 0, 100), [-1.0, 0.0, 2.0, 10.0, 40.0]),
    ("truncnormal", (0, 1, 20, 21), [20.0, 20.01, 20.5, 21.0]),
    ("truncnormal", (0, 10, -30, 12), [-30.0, -1.0, 0.0, 11.0, 13.0]),
    ("loguniform", (0.05, 1), [0.04, 0.05, 0.2, 0.99, 1.0, 2.0]),
    ("loguniform", (0.05, 1.5), [0.05, 0.3, 1.5]),
    ("loguniform", (0.001, 1000), [0.001, 0.5, 1.0, 999.0, 1000.0]),
]

PROBS = [1e-10, 1e-3, 0.1, 0.25, 0.5, 0.75, 0.9, 0.999, 1 - 1e-10]

out = {
    "generator": "priors_scipy.py",
    "scipy": scipy.__version__,
    "numpy": np.__version__,
    "priors": [],
    "dirichlet": [],
    "trigamma": [],
}
for name, args, xs in CASES:
    d = dist(name, args)
    out["priors"].append({
        "expr": expr(name, args),
        "x": xs,
        "logpdf": [num(d.logpdf(x)) for x in xs],
        "cdf": [float(d.cdf(x)) for x in xs],
        "p": PROBS,
        "ppf": [float(d.ppf(p)) for p in PROBS],
        "mean": float(d.mean()),
        "std": float(d.std()),
        "median": float(d.median()),
    })

# Symmetric Dirichlet log densities at points on the simplex.
rng = np.random.default_rng(20240611)
for n in (2, 3, 5):
    for alpha in (0.5, 1.0, 3.0):
        for _ in range(3):
            x = rng.dirichlet(np.full(n, 1.0))
            x = x / x.sum()
            out["dirichlet"].append({
                "alpha": alpha,
                "x": [float(v) for v in x],
                "logpdf": float(st.dirichlet.logpdf(x, np.full(n, alpha))),
            })

for x in (0.05, 0.3, 0.5, 1.0, 2.0, 3.7, 9.5, 12.0, 40.0, 1000.0):
    out["trigamma"].append({"x": x, "value": float(scipy.special.polygamma(1, x))})

json.dump(out, sys.stdout, indent=1)
sys.stdout.write("\n")
