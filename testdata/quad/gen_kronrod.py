#!/usr/bin/python3
"""Compute the 7-point Gauss and 15-point Kronrod rules on [-1, 1] from first
principles, in exact rational arithmetic and 60-digit decimals, and write them
to kronrod15.json for model/quad's tests.

Method (Kronrod 1965, "Nodes and weights of quadrature formulas", Consultants
Bureau; see also Piessens et al. 1983, QUADPACK, Springer, sec. 2.2):
  * the Gauss nodes are the roots of the Legendre polynomial P7;
  * the 8 added nodes are the roots of the Stieltjes polynomial E8, the monic
    polynomial of degree 8 with  int_{-1}^{1} E8(x) P7(x) x^k dx = 0, k = 0..7;
  * the 15 Kronrod weights make the rule exact for x^0 .. x^14;
  * the Gauss weights are 2 / ((1 - x^2) P7'(x)^2).
The script then checks the degree of exactness (Kronrod: 22, Gauss: 13).

Run: /usr/bin/python3 gen_kronrod.py > kronrod15.json
Uses only the Python standard library.
"""
import json
from decimal import Decimal, getcontext
from fractions import Fraction

getcontext().prec = 70


def poly_mul(a, b):
    out = [Fraction(0)] * (len(a) + len(b) - 1)
    for i, x in enumerate(a):
        for j, y in enumerate(b):
            out[i + j] += x * y
    return out


def poly_add(a, b):
    n = max(len(a), len(b))
    a = a + [Fraction(0)] * (n - len(a))
    b = b + [Fraction(0)] * (n - len(b))
    return [x + y for x, y in zip(a, b)]


def legendre(n):
    # Bonnet recurrence: (k+1) P_{k+1} = (2k+1) x P_k - k P_{k-1}
    p0, p1 = [Fraction(1)], [Fraction(0), Fraction(1)]
    if n == 0:
        return p0
    for k in range(1, n):
        xp = [Fraction(0)] + p1
        nxt = poly_add([c * Fraction(2 * k + 1, k + 1) for c in xp],
                       [-c * Fraction(k, k + 1) for c in p0])
        p0, p1 = p1, nxt
    return p1


def moment(k):
    # int_{-1}^{1} x^k dx
    return Fraction(0) if k % 2 else Fraction(2, k + 1)


def integrate(p):
    return sum(c * moment(i) for i, c in enumerate(p))


def solve(a, b):
    # Gaussian elimination with partial pivoting on a square system
    n = len(b)
    m = [row[:] + [b[i]] for i, row in enumerate(a)]
    for c in range(n):
        piv = max(range(c, n), key=lambda r: abs(m[r][c]))
        m[c], m[piv] = m[piv], m[c]
        for r in range(n):
            if r != c and m[r][c] != 0:
                f = m[r][c] / m[c][c]
                m[r] = [x - f * y for x, y in zip(m[r], m[c])]
    return [m[i][n] / m[i][i] for i in range(n)]


def peval(p, x):
    s = Decimal(0)
    for c in reversed(p):
        s = s * x + Decimal(c.numerator) / Decimal(c.denominator)
    return s


def pw(x, k):
    # x^k with 0^0 = 1 (Decimal refuses 0 ** 0)
    return Decimal(1) if k == 0 else x ** k


def roots_in_unit(p):
    # all simple roots in (-1, 1): sign scan on a fine grid, then bisection
    grid = [Decimal(-1) + Decimal(2) * Decimal(i) / Decimal(4000) for i in range(4001)]
    out = []
    vals = [peval(p, x) for x in grid]
    for i in range(4000):
        a, b, fa, fb = grid[i], grid[i + 1], vals[i], vals[i + 1]
        if fa == 0:
            out.append(a)
            continue
        if fa * fb < 0:
            for _ in range(230):
                mid = (a + b) / 2
                fm = peval(p, mid)
                if fa * fm <= 0:
                    b = mid
                else:
                    a, fa = mid, fm
            out.append((a + b) / 2)
    return out


P7 = legendre(7)
# E8 = x^8 + c6 x^6 + c4 x^4 + c2 x^2 + c0 (even, since P7 is odd)
unknown = [0, 2, 4, 6]
rows, rhs = [], []
for k in (1, 3, 5, 7):
    w = poly_mul(P7, [Fraction(0)] * k + [Fraction(1)])
    rows.append([integrate(poly_mul(w, [Fraction(0)] * j + [Fraction(1)])) for j in unknown])
    rhs.append(-integrate(poly_mul(w, [Fraction(0)] * 8 + [Fraction(1)])))
c = solve(rows, rhs)
E8 = [Fraction(0)] * 9
E8[8] = Fraction(1)
for j, cj in zip(unknown, c):
    E8[j] = cj

gauss = roots_in_unit(P7)
added = roots_in_unit(E8)
assert len(gauss) == 7 and len(added) == 8
nodes = sorted(gauss + added)

# Kronrod weights: exactness for x^0..x^14
A = [[pw(x, k) for x in nodes] for k in range(15)]
bvec = [Decimal(moment(k).numerator) / Decimal(moment(k).denominator) for k in range(15)]
wk = solve(A, bvec)

dP7 = [c * i for i, c in enumerate(P7)][1:]
wg = {x: Decimal(2) / ((1 - x * x) * peval(dP7, x) ** 2) for x in gauss}


def exactness(xs, ws):
    deg = 0
    for k in range(0, 40):
        got = sum(w * pw(x, k) for x, w in zip(xs, ws))
        want = Decimal(moment(k).numerator) / Decimal(moment(k).denominator)
        if abs(got - want) > Decimal(10) ** -50:
            return k - 1
        deg = k
    return deg


degK = exactness(nodes, wk)
degG = exactness(gauss, [wg[x] for x in gauss])

# QUADPACK order: non-negative nodes, descending, 0 last; Gauss weights for
# the Gauss nodes among them (every second Kronrod node) in the same order.
pos = [i for i, x in enumerate(nodes) if x >= -Decimal(10) ** -60]
pos.sort(key=lambda i: -nodes[i])
fmt = lambda d: format(d.quantize(Decimal(10) ** -34), 'f')
out = {
    "source": "gen_kronrod.py: Legendre P7 and Stieltjes E8 roots, exactness-derived weights",
    "x_kronrod": [fmt(abs(nodes[i])) for i in pos],
    "w_kronrod": [fmt(wk[i]) for i in pos],
    "w_gauss": [fmt(wg[g]) for g in sorted((x for x in gauss if x >= -Decimal(10) ** -60), key=lambda x: -x)],
    "degree_kronrod": degK,
    "degree_gauss": degG,
}
print(json.dumps(out, indent=1))
