#!/usr/bin/python3
"""Reference integrals for model/quad's tests, by SciPy's adaptive QUADPACK
routine scipy.integrate.quad, written to scipy_reference.json.

Each case is an integrand of u on [lo, hi], given by a kind and parameters;
model/quad's scipy_test.go implements the same kinds (keep the two in step).
The integrals are computed in u with the known sharp points passed to quad
as `points`, a relative tolerance of 1e-13 and up to 5000 subintervals; the
file records quad's own error estimate beside each value. Breakpoints given
to model/quad (the field "breaks") are a separate matter: some cases give
none on purpose.

Kinds (d = exp(u)):
  cauchy   sum_i h_i / (1 + ((u - c_i)/g_i)^2)
  tolerant p(R) * exp(-(plx - 1/d)^2 / (2 splx^2)) * d^3, with
           R = (v(d) - v0)/s, v(d) = a d exp(-d/b) and
           p(R) = (1 - exp(-R^2/2)) / R^2, p(0) = 1/2
           (Sivia & Skilling 2006, Data Analysis, sec. 8.3)
  student  (1 + R^2/nu)^(-(nu+1)/2) * exp(-(plx - 1/d)^2 / (2 splx^2)) * d^3,
           R as for tolerant
  kink     exp(-|u - c|/s) * (1 + 0.5 sin(3u))
  edge     sqrt(d - d1) exp(-d/2) for d > d1, 0 otherwise
  arms     exp(-(plx - 1/d)^2 / (2 splx^2)) * d^3 *
           (exp(-d/h) + sum_k a_k exp(-(d - d_k)^2 / (2 w_k^2)))

Run: /usr/bin/python3 gen_scipy.py > scipy_reference.json
"""
import json
import math

import scipy
from scipy.integrate import quad

LO, HI = math.log(0.05), math.log(30.0)


def f_cauchy(p):
    return lambda u: sum(h / (1 + ((u - c) / g) ** 2) for c, g, h in p["peaks"])


def vel(p, d):
    return p["a"] * d * math.exp(-d / p["b"])


def plx_term(p, d):
    return math.exp(-(p["plx"] - 1 / d) ** 2 / (2 * p["splx"] ** 2)) * d ** 3


def f_tolerant(p):
    def f(u):
        d = math.exp(u)
        r = (vel(p, d) - p["v0"]) / p["s"]
        k = 0.5 if r == 0 else -math.expm1(-r * r / 2) / (r * r)
        return k * plx_term(p, d)
    return f


def f_student(p):
    def f(u):
        d = math.exp(u)
        r = (vel(p, d) - p["v0"]) / p["s"]
        nu = p["nu"]
        return (1 + r * r / nu) ** (-(nu + 1) / 2) * plx_term(p, d)
    return f


def f_kink(p):
    return lambda u: math.exp(-abs(u - p["c"]) / p["s"]) * (1 + 0.5 * math.sin(3 * u))


def f_edge(p):
    def f(u):
        d = math.exp(u)
        return math.sqrt(d - p["d1"]) * math.exp(-d / 2) if d > p["d1"] else 0.0
    return f


def f_arms(p):
    def f(u):
        d = math.exp(u)
        s = math.exp(-d / p["h"])
        for a, dk, w in p["arms"]:
            s += a * math.exp(-(d - dk) ** 2 / (2 * w * w))
        return plx_term(p, d) * s
    return f


KINDS = {"cauchy": f_cauchy, "tolerant": f_tolerant, "student": f_student,
         "kink": f_kink, "edge": f_edge, "arms": f_arms}


def vel_roots(p):
    # distances where v(d) = v0, found by bisection on a fine grid in u
    out = []
    us = [LO + (HI - LO) * i / 20000 for i in range(20001)]
    g = lambda u: vel(p, math.exp(u)) - p["v0"]
    for a, b in zip(us, us[1:]):
        if g(a) * g(b) < 0:
            for _ in range(100):
                m = 0.5 * (a + b)
                if g(a) * g(m) <= 0:
                    b = m
                else:
                    a = m
            out.append(0.5 * (a + b))
    return out


cases = []

p = {"peaks": [[-1.3, 0.01, 1.0], [0.4, 0.2, 0.3], [2.2, 0.004, 2.0]]}
cases.append(dict(name="cauchy-narrow", kind="cauchy", params=p, breaks=[],
                  points=[c for c, _, _ in p["peaks"]]))

p = {"a": 30.0, "b": 6.0, "v0": 40.0, "s": 3.0, "plx": 0.12, "splx": 0.03}
cases.append(dict(name="tolerant-two-matches", kind="tolerant", params=p,
                  breaks=vel_roots(p) + [math.log(1 / p["plx"])], points=vel_roots(p)))
cases.append(dict(name="tolerant-no-breaks", kind="tolerant", params=p,
                  breaks=[], points=vel_roots(p)))

p = {"a": 30.0, "b": 6.0, "v0": 25.0, "s": 2.0, "nu": 3.0, "plx": 0.5, "splx": 0.02}
cases.append(dict(name="student-offset", kind="student", params=p,
                  breaks=vel_roots(p) + [math.log(1 / p["plx"])],
                  points=vel_roots(p) + [math.log(1 / p["plx"])]))

p = {"c": 0.7, "s": 0.3}
cases.append(dict(name="kink-unmarked", kind="kink", params=p, breaks=[], points=[p["c"]]))

p = {"d1": 1.7}
cases.append(dict(name="edge-sqrt", kind="edge", params=p, breaks=[math.log(p["d1"])],
                  points=[math.log(p["d1"])]))

p = {"plx": 0.09, "splx": 0.025, "h": 3.0,
     "arms": [[0.8, 4.3, 0.15], [1.5, 9.1, 0.2], [0.4, 13.6, 0.25]]}
cases.append(dict(name="arms-low-parallax", kind="arms", params=p,
                  breaks=[math.log(dk) for _, dk, _ in p["arms"]],
                  points=[math.log(dk) for _, dk, _ in p["arms"]]))

out = {"source": "scipy.integrate.quad, SciPy " + scipy.__version__ +
       ", epsabs=0, epsrel=1e-13, limit=5000, points at the sharp features",
       "lo": LO, "hi": HI, "cases": []}
for c in cases:
    f = KINDS[c["kind"]](c["params"])
    val, err = quad(f, LO, HI, points=sorted(c["points"]), epsabs=0, epsrel=1e-13, limit=5000)
    out["cases"].append({"name": c["name"], "kind": c["kind"], "params": c["params"],
                         "breaks": c["breaks"], "log_integral": math.log(val),
                         "rel_err": err / val})
print(json.dumps(out, indent=1))
