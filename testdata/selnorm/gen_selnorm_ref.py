#!/usr/bin/python3
"""Reference values of the selection's normalisation Z_m (MODEL.md section 9).

For each case (a spiral layout, a vertical layer, a survey selection) this script integrates
Z_m = ∫ rho_m S dV over the heliocentric distance range [d_min, d_max] by brute force, for
the field disk and each arm, and writes selnorm_ref.json next to itself.

The densities are written here from MODEL.md sections 4 and 9 (log-periodic arms with an
optional kink, windings counted over [beta_start - 30 tau, beta_end + 30 tau], logistic soft
ends, width slope with its floor of 0.01 kpc, exponential field disk, Gaussian layer).
The integral runs in heliocentric cylindrical coordinates (s, l, z), dV = s ds dl dz:
  - l by scipy.integrate.quad_vec (adaptive, all components at once), over the longitudes
    not excluded, with the longitudes where the declination band's edge crosses the plane
    as breakpoints;
  - s on a fixed composite Gauss-Legendre grid (panels of 0.15 kpc, 6 nodes);
  - z in pieces cut where the line of constant (s, l) enters or leaves the declination
    band (the latitudes of A sin b + B cos b = sin(delta_edge), A and B from the celestial
    pole's Galactic position) and the spheres d = d_min, d = d_max: the layer's share of a
    piece by scipy.special.ndtr, or, with a completeness term, by Gauss-Legendre nodes with
    S(d) evaluated at each node (see layer).
With vertical = "none" the in-plane density is integrated with S(l, 0, s) over
s in [d_min, d_max].

Run from the repository root: /usr/bin/python3 testdata/selnorm/gen_selnorm_ref.py [CASE ...]
(names of cases to compute, all by default; SELNORM_OUT names another output file).
Written with Debian's python3-numpy 1.24.2 and python3-scipy 1.10.1.
"""

import json
import math
import os
import sys

import numpy as np
import scipy
from scipy import integrate, special

DEG = math.pi / 180

# The north celestial pole in Galactic coordinates: b = delta of the north Galactic pole,
# l = 122.93192 deg (ESA 1997, The Hipparcos and Tycho Catalogues, vol. 1, section 1.5.3).
L_NCP = 122.93192 * DEG
B_NCP = 27.12825 * DEG
POLE = np.array([math.cos(B_NCP) * math.cos(L_NCP), math.cos(B_NCP) * math.sin(L_NCP), math.sin(B_NCP)])

GL_S_X, GL_S_W = np.polynomial.legendre.leggauss(6)
GL_Z_X, GL_Z_W = np.polynomial.legendre.leggauss(16)


def arm_log_radius(arm, beta):
    """ln R_k(beta) = ln R_ref - integral of tan psi from beta_ref to beta."""
    t1 = math.tan(arm["pitch"] * DEG)
    if not arm.get("kinked"):
        return math.log(arm["rref"]) - t1 * (beta - arm["beta_ref"] * DEG)
    t2 = math.tan(arm["pitch2"] * DEG)
    bk, br = arm["kink"] * DEG, arm["beta_ref"] * DEG
    f = t1 * (np.minimum(beta, bk) - min(br, bk)) + t2 * (np.maximum(beta, bk) - max(br, bk))
    return math.log(arm["rref"]) - f


def arm_cos(arm, beta):
    if not arm.get("kinked"):
        return np.full_like(beta, math.cos(arm["pitch"] * DEG))
    return np.where(beta < arm["kink"] * DEG, math.cos(arm["pitch"] * DEG), math.cos(arm["pitch2"] * DEG))


def logistic(x):
    return 0.5 * (1 + np.tanh(0.5 * x))


def arm_density(case, arm, R, beta):
    """rho_k(R, beta) per kpc^2 (MODEL.md section 4)."""
    tau = case["tau_deg"] * DEG
    bs, be = arm["start"] * DEG, arm["end"] * DEG
    lo, hi = bs - 30 * tau, be + 30 * tau
    span = be - bs
    zk = span / (1 - math.exp(-span / tau))
    w = np.maximum(arm["width"] + case["width_slope"] * (R - case["R0"]), 0.01)
    out = np.zeros_like(R)
    nmin = math.floor((lo - math.pi) / (2 * math.pi)) - 1
    nmax = math.ceil((hi + math.pi) / (2 * math.pi)) + 1
    for n in range(nmin, nmax + 1):
        bn = beta + 2 * math.pi * n
        inside = (bn >= lo) & (bn <= hi)
        if not inside.any():
            continue
        c = arm_cos(arm, bn)
        rk = np.exp(arm_log_radius(arm, bn))
        delta = (R - rk) * c
        e = logistic((bn - bs) / tau) * logistic((be - bn) / tau)
        g = np.exp(-0.5 * (delta / w) ** 2) / (math.sqrt(2 * math.pi) * w)
        out += np.where(inside, e * g * c, 0.0)
    return out / (zk * R)


def densities(case, s, l):
    """Field and arm densities at heliocentric plane points (s, l), shape (K+1, ...)."""
    x, y = s * np.cos(l), s * np.sin(l)
    R = np.hypot(case["R0"] - x, y)
    beta = np.arctan2(y, case["R0"] - x)
    h = case["disk_scale"]
    out = [np.exp(-R / h) / (2 * math.pi * h * h)]
    for arm in case["arms"]:
        out.append(arm_density(case, arm, R, beta))
    return np.array(out)


def completeness(case, d):
    c = case["selection"].get("completeness")
    if not c:
        return np.ones_like(d)
    return 1 / (1 + np.exp((d - c["half_distance"]) / c["softness"]))


def band_latitudes(case, l):
    """Latitudes (rad) where the declination of (l, b) equals a band limit, per l: the
    solutions of A sin b + B cos b = sin(delta), A = pole_z, B = pole_x cos l + pole_y sin l,
    in (-pi/2, pi/2); NaN where there is none. Shape (4, len(l))."""
    sel = case["selection"]
    A = POLE[2]
    B = POLE[0] * np.cos(l) + POLE[1] * np.sin(l)
    C = np.hypot(A, B)
    phi = np.arctan2(B, A)
    out = []
    for dec in (sel["declination"][0], sel["declination"][1]):
        a = math.sin(dec * DEG) / C
        ok = np.abs(a) <= 1
        base = np.arcsin(np.clip(a, -1, 1))
        for cand in (base - phi, math.pi - base - phi):
            cand = (cand + math.pi) % (2 * math.pi) - math.pi
            good = ok & (cand > -math.pi / 2) & (cand < math.pi / 2)
            out.append(np.where(good, cand, np.nan))
    return np.array(out)


def in_band(case, l, b):
    dec_lo, dec_hi = case["selection"]["declination"]
    n = np.stack([np.cos(b) * np.cos(l), np.cos(b) * np.sin(l), np.sin(b)])
    sd = np.tensordot(POLE, n, axes=1)
    return (sd >= math.sin(dec_lo * DEG) - 1e-15) & (sd <= math.sin(dec_hi * DEG) + 1e-15)


def layer(case, s, l):
    """Integral over z of N(z + z_sun; 0, H) S(l, b, d) 1[d_min <= d <= d_max] at each
    plane point (s array, l scalar). The line of constant (s, l) is cut where it enters or
    leaves the band and the spheres d_min, d_max; on each piece the direction term is
    constant (tested at the piece's midpoint). Without a completeness term the layer's
    share of a piece is a difference of scipy.special.ndtr; with one, Gauss-Legendre nodes
    (16 per piece) take S(d) at each node, the pieces further cut at 0, 1.5 H and 4.5 H from
    the mid-plane (16 nodes give 1e-9 of the layer there)."""
    H, zs = case["scale_height"], case["z_sun"]
    dmin, dmax = case["d_min"], case["d_max"]
    complete = bool(case["selection"].get("completeness"))
    reach = 9 if complete else 20
    lo, hi = -zs - reach * H, -zs + reach * H
    ks = (-9, -4.5, -1.5, 0, 1.5, 4.5, 9) if complete else (-20, 20)
    edges = [np.full_like(s, -zs + k * H) for k in ks]
    for b in band_latitudes(case, np.array([l]))[:, 0]:
        if not math.isnan(b):
            edges.append(s * math.tan(b))
    for d in (dmin, dmax):
        zz = np.sqrt(np.maximum(d * d - s * s, 0))
        edges += [zz, -zz]
    e = np.sort(np.clip(np.array(edges), lo, hi), axis=0)
    total = np.zeros_like(s)
    for i in range(e.shape[0] - 1):
        a, c = e[i], e[i + 1]
        mid, half = 0.5 * (a + c), 0.5 * (c - a)
        dm = np.hypot(s, mid)
        ok = in_band(case, l, np.arctan2(mid, s)) & (dm >= dmin) & (dm <= dmax) & (half > 0)
        if not complete:
            share = special.ndtr((c + zs) / H) - special.ndtr((a + zs) / H)
            total += np.where(ok, share, 0.0)
            continue
        z = mid[None, :] + half[None, :] * GL_Z_X[:, None]
        d = np.hypot(s[None, :], z)
        f = np.exp(-0.5 * ((z + zs) / H) ** 2) / (math.sqrt(2 * math.pi) * H) * completeness(case, d)
        total += np.where(ok, half * (GL_Z_W[:, None] * f).sum(axis=0), 0.0)
    return total


def s_grid(case, upto):
    brk = sorted(set([0.0, case["d_min"], upto, case["R0"]]))
    brk = [b for b in brk if b <= upto]
    xs, ws = [], []
    for a, b in zip(brk[:-1], brk[1:]):
        n = max(1, int(math.ceil((b - a) / 0.15)))
        edges = np.linspace(a, b, n + 1)
        mid, half = 0.5 * (edges[1:] + edges[:-1]), 0.5 * (edges[1:] - edges[:-1])
        xs.append((mid[:, None] + half[:, None] * GL_S_X[None, :]).ravel())
        ws.append((half[:, None] * GL_S_W[None, :]).ravel())
    return np.concatenate(xs), np.concatenate(ws)


def plane_integrand(case, l, sx, sw):
    rho = densities(case, sx, np.full_like(sx, l))
    if case["vertical"] == "none":
        if not in_band(case, np.array([l]), np.array([0.0]))[0]:
            return np.zeros(rho.shape[0])
        keep = (sx >= case["d_min"]) & (sx <= case["d_max"])
        v = np.where(keep, completeness(case, sx), 0.0)
    else:
        v = layer(case, sx, l)
    return (rho * (v * sx * sw)[None, :]).sum(axis=1)


def allowed_longitudes(case):
    """The ranges of l in [0, 2 pi) not excluded."""
    cuts = []
    for a, b in case["selection"].get("exclude_longitude", []):
        a, b = (a % 360) * DEG, (b % 360) * DEG
        if a <= b:
            cuts.append((a, b))
        else:
            cuts += [(a, 2 * math.pi), (0.0, b)]
    cuts.sort()
    out, at = [], 0.0
    for a, b in cuts:
        if a > at:
            out.append((at, a))
        at = max(at, b)
    if at < 2 * math.pi:
        out.append((at, 2 * math.pi))
    return out


def edge_longitudes(case):
    """Longitudes where a declination limit crosses the plane (b = 0): B(l) = sin(delta)."""
    out = []
    g = math.hypot(POLE[0], POLE[1])
    l0 = math.atan2(POLE[1], POLE[0])
    for dec in case["selection"]["declination"]:
        a = math.sin(dec * DEG) / g
        if abs(a) < 1 and abs(dec) < 90:
            for sgn in (1, -1):
                out.append((l0 + sgn * math.acos(a)) % (2 * math.pi))
    return out


def normalisation(case):
    upto = case["d_max"]
    sx, sw = s_grid(case, upto)
    K = 1 + len(case["arms"])
    pts = sorted(set(edge_longitudes(case) + [0.0, math.pi]))
    total = np.zeros(K)
    for a, b in allowed_longitudes(case):
        inner = [p for p in pts if a < p < b]
        f = lambda l: plane_integrand(case, l, sx, sw)
        v, err = integrate.quad_vec(f, a, b, points=inner or None, limit=4000, epsabs=1e-8, epsrel=1e-7, norm="max")
        total += v
    return total.tolist()


def main():
    here = os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(here, "selnorm_cases.json")) as f:
        cases = json.load(f)
    only = sys.argv[1:]
    out = []
    for case in cases:
        if only and case["name"] not in only:
            continue
        z = normalisation(case)
        print(case["name"], z, flush=True)
        out.append({"name": case["name"], "Z": z})
    with open(os.environ.get("SELNORM_OUT", os.path.join(here, "selnorm_ref.json")), "w") as f:
        json.dump({"numpy": np.__version__, "scipy": scipy.__version__, "cases": out}, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
