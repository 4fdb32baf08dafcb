"""Reference quantiles for mcmc.Quantile with equal weights.

The midpoint ("Hazen") definition, type 5 of Hyndman & Fan (1996, American
Statistician 50, 361), as computed by numpy.quantile(..., method="hazen")
(Debian python3-numpy).

Run from this folder:  /usr/bin/python3 quantile_reference.py
Writes quantile_data.csv (case,value) and quantile_reference.csv
(case,p,quantile); mcmc/summary_test.go reads both.
"""
import numpy as np

rng = np.random.default_rng(1996)
cases = {
    "normal": rng.normal(size=101),
    "few": np.array([3.0, -1.0, 2.5, 7.0]),
    "ties": np.round(rng.exponential(size=40), 1),
    "single": np.array([4.25]),
}
ps = [0.0, 0.01, 0.05, 0.1, 0.16, 0.25, 0.5, 0.6, 0.75, 0.84, 0.9, 0.95, 0.99, 1.0]

with open("quantile_data.csv", "w") as f:
    f.write("case,value\n")
    for name, x in cases.items():
        for v in x:
            f.write(f"{name},{v!r}\n")

with open("quantile_reference.csv", "w") as f:
    f.write("case,p,quantile\n")
    for name, x in cases.items():
        for p in ps:
            q = np.quantile(x, p, method="hazen")
            f.write(f"{name},{p!r},{float(q)!r}\n")
