#!/usr/bin/python3
"""Reference per-source likelihoods of the mirabilis model (as stated in package model).

What this script does
---------------------
1. Builds the ICRS -> Galactic rotation from the Hipparcos definition (pole at
   alpha = 192.85948 deg, delta = +27.12825 deg, l of the north celestial pole
   122.93192 deg; ESA 1997, The Hipparcos and Tycho Catalogues, vol. 1, §1.5.3)
   and checks it against astropy's Galactic frame and the printed matrix.
2. Derives the standard solar motion (20 km/s toward alpha = 18h, delta = +30 deg,
   equinox B1900) in Galactic Cartesian components with astropy's FK4 frame, and
   checks it against astropy's LSRK frame (Gordon 1975 definition).
3. Draws an invented mock galaxy catalog (four arms: Corvid, Lantern, Tamarisk,
   Halcyon, plus an exponential-disk field) from the model at the true
   parameters, with fixed seeds, and writes mock.csv in the catalog format.
4. Writes the settings (setup.json), the true parameters (params_truth.json),
   eleven pilot sets (pilot_00 is the truth, pilot_01..10 are draws with the
   pilot spreads, seed PILOT_SEED) and ten test sets (seed TEST_SEED).
5. Reads mock.csv back and computes, for every source and every set, the log
   of the distance-marginalised likelihood L_i of package model, Likelihood:
       L_i = sum_m f_m int N(plx; 1/d, s_plx) (d cos b)^2 rho_m(R, beta) K_i(d) du,
   u = ln d over [ln d_min, ln d_max], in two independent ways:
     (a) scipy.integrate.quad (QAGP) over the whole range, epsrel 1e-10,
         limit 2000, with break points at the local maxima of the integrand and
         of each membership's term (found on the nodes of (b), kept where within
         40 of the maximum in log) and at the features of feature_points()
         (R = R_core crossings, a kinked arm's kink azimuth, width-floor radii);
     (b) a composite 16-point Gauss-Legendre rule on 4000 equal panels (64 000
         nodes, panel width 1.6e-3 in u), the feature points added as edges.
   The quad value is written to reference.csv; the script stops with an error
   if any value from (a) and (b) disagree by more than 1e-6 in log L.
   Variants: galaxy_gaussian at every set, vertical_gaussian at the truth, the
   pilots and test_00..test_04; at the truth also galaxy_tolerant,
   galaxy_student4, parallax_gaussian (distance prior uniform in d) and
   vertical_selection.
6. The vertical variants (package model's "Vertical structure and survey
   selection") put the sources in a Gaussian layer: the spatial factor in u
   becomes sum_m f_m rho_m(R, beta) N(d sin b + z_sun; 0, H) d^3 cos b instead
   of (d cos b)^2 sum_m f_m rho_m(R, beta); vertical_selection multiplies it by
   the survey's completeness S(d) = 1 / (1 + exp((d - D) / s)) with D and s of
   SELECTION. H (scale_height) and z_sun are drawn for the pilot and test sets
   with their own seed (VERTICAL_SEED) and appended to each parameter file, so
   that the other parameters' draws are those of the in-plane reference.

Rerunning it reproduces every file in this folder byte for byte (fixed seeds,
fixed formatting), given the same library versions.

Run with: numpy 1.24.2, scipy 1.10.1, astropy 5.2.1 (Debian python3 packages),
Python 3.11.2; with --all 10 to 25 minutes on 2 cores (12 900 integrals, each done
twice), without it about half of that.

Usage: /usr/bin/python3 gen_likelihood_ref.py [--all]   (writes into its own folder)

Without --all, the rows of the in-plane variants (galaxy_*, parallax_*) are
taken from the reference.csv already in the folder, whose mock and parameter
values they were computed from are unchanged, and one row in REUSE_CHECK of them
is recomputed and must reproduce the written value digit for digit; --all
recomputes every row.
"""

import csv
import json
import math
import multiprocessing
import os
import sys
import time
import warnings

import numpy as np
from scipy import integrate
from scipy.special import gammaln

HERE = os.path.dirname(os.path.abspath(__file__))

# ---------------------------------------------------------------------------
# Constants and settings
# ---------------------------------------------------------------------------

# 1 au per Julian year in km/s per (kpc mas/yr), IAU 2012 au (package model, Frames).
K_PM = 4.740470446

# Hipparcos definition of the Galactic frame (ESA 1997, vol. 1, §1.5.3).
NGP_RA_DEG = 192.85948
NGP_DEC_DEG = 27.12825
L_NCP_DEG = 122.93192

SETTINGS = {
    "rotation_curve": "linear",
    "R_core": 2.0,          # kpc, solid-body core of the rotation curve
    "R_inner": 4.0,         # kpc, radius inside which the bar dispersion acts
    "sigma_bar": 40.0,      # km/s
    "s_bar": 0.5,           # kpc, logistic softening of the bar dispersion
    "arm_end_softening_deg": 3.0,   # tau
    "winding_window_tau": 30.0,     # windings kept within 30 tau of an arm's range
    "field_scale_length": 3.0,      # h, kpc
    "distance_min": 0.05,   # kpc
    "distance_max": 30.0,   # kpc
    "student_nu": 4.0,
}

# Arms: fixed settings. Corvid is kinked; Halcyon spans 400 deg of azimuth.
ARMS = [
    {"name": "Corvid", "ref_azimuth_deg": 20.0, "azimuth_range_deg": [-30.0, 210.0],
     "kinked": True},
    {"name": "Lantern", "ref_azimuth_deg": 0.0, "azimuth_range_deg": [-70.0, 170.0],
     "kinked": False},
    {"name": "Tamarisk", "ref_azimuth_deg": 0.0, "azimuth_range_deg": [-60.0, 130.0],
     "kinked": False},
    {"name": "Halcyon", "ref_azimuth_deg": 0.0, "azimuth_range_deg": [-20.0, 380.0],
     "kinked": False},
]
ARM_NAMES = [a["name"] for a in ARMS]

TRUTH = {
    "R0": 8.2, "Theta0": 235.0, "dTheta_dR": -0.6,
    "Usun": 10.5, "Vsun": 13.0, "Wsun": 7.5,
    "Us": 2.5, "Vs": -3.5, "Ws": 0.5,
    "sigma_vir": 6.0, "width_slope": 0.0,
    "Corvid_Rref": 7.0, "Corvid_pitch": 13.5, "Corvid_pitch2": 8.0, "Corvid_kink": 60.0,
    "Corvid_width": 0.25,
    "Lantern_Rref": 9.3, "Lantern_pitch": 11.0, "Lantern_width": 0.30,
    "Tamarisk_Rref": 11.6, "Tamarisk_pitch": 10.5, "Tamarisk_width": 0.35,
    "Halcyon_Rref": 5.0, "Halcyon_pitch": 6.5, "Halcyon_width": 0.20,
    "f_field": 0.20, "f_Corvid": 0.22, "f_Lantern": 0.20, "f_Tamarisk": 0.18,
    "f_Halcyon": 0.20,
}

# Expected posterior spreads for a few-hundred-source catalog (a judgement,
# no source); used for the pilot and test draws.
PILOT_SPREADS = {
    "R0": 0.15, "Theta0": 5.0, "dTheta_dR": 1.0,
    "Usun": 2.0, "Vsun": 4.0, "Wsun": 1.0,
    "Us": 3.0, "Vs": 3.0, "Ws": 2.0, "sigma_vir": 1.5,
}
for _a in ARMS:
    PILOT_SPREADS[_a["name"] + "_Rref"] = 0.1
    PILOT_SPREADS[_a["name"] + "_pitch"] = 1.0
    if _a["kinked"]:
        PILOT_SPREADS[_a["name"] + "_pitch2"] = 1.0
        PILOT_SPREADS[_a["name"] + "_kink"] = 3.0
    PILOT_SPREADS[_a["name"] + "_width"] = 0.04
PILOT_SPREADS["f_field"] = 0.03
for _a in ARMS:
    PILOT_SPREADS["f_" + _a["name"]] = 0.03

# The sources' layer: the mock's heights are drawn with this scale height and the
# Sun in the mid-plane (make_mock); pilot and test sets scatter both.
VERTICAL_TRUTH = {"scale_height": 0.03, "z_sun": 0.0}
VERTICAL_SPREADS = {"scale_height": 0.006, "z_sun": 0.01}
VERTICAL_SEED = 3303
# The survey completeness of vertical_selection (kpc).
SELECTION = {"half_distance": 10.0, "softness": 1.5}

MOCK_SEED = 20240611
PILOT_SEED = 1101
TEST_SEED = 2202
N_SOURCES = 300
N_DRAWS = 10
WIDTH_SLOPE_ALT = 0.02   # width_slope used in the odd-numbered draws

# Quadrature settings of the reference.
GL_PANELS = 4000
GL_ORDER = 16
QUAD_LIMIT = 2000
QUAD_EPSREL = 1e-10
PEAK_FLOOR = 40.0        # break points only where log f > max - 40
MAX_DISAGREEMENT = 1e-6
REUSE_CHECK = 25         # without --all, recompute one reused in-plane row in 25
# The vertical_gaussian variant's test sets (all eleven pilot sets are used).
N_VERTICAL_TESTS = 5

LN2PI_HALF = 0.5 * math.log(2.0 * math.pi)

# ---------------------------------------------------------------------------
# Frames
# ---------------------------------------------------------------------------


def hipparcos_matrix():
    """ICRS -> Galactic rotation (rows: Galactic x, y, z axes in ICRS).

    From the spherical relations of the Hipparcos definition (ESA 1997 vol. 1,
    §1.5.3, eq. 1.5.11), applied to the three ICRS basis vectors:
      sin b = sin d sin dG + cos d cos dG cos(a - aG)
      cos b sin(lN - l) = cos d sin(a - aG)
      cos b cos(lN - l) = sin d cos dG - cos d sin dG cos(a - aG)
    """
    aG = math.radians(NGP_RA_DEG)
    dG = math.radians(NGP_DEC_DEG)
    lN = math.radians(L_NCP_DEG)
    M = np.zeros((3, 3))
    for j in range(3):
        e = np.zeros(3)
        e[j] = 1.0
        x, y, z = e
        c = x * math.cos(aG) + y * math.sin(aG)      # cos d cos(a - aG)
        s = -x * math.sin(aG) + y * math.cos(aG)     # cos d sin(a - aG)
        sinb = z * math.sin(dG) + math.cos(dG) * c
        C = z * math.cos(dG) - math.sin(dG) * c      # cos b cos(lN - l)
        S = s                                        # cos b sin(lN - l)
        gx = math.cos(lN) * C + math.sin(lN) * S     # cos b cos l
        gy = math.sin(lN) * C - math.cos(lN) * S     # cos b sin l
        M[:, j] = (gx, gy, sinb)
    return M


M_GAL = hipparcos_matrix()


def check_frames():
    """Cross-checks of the frame matrix and derivation of V_std."""
    M = M_GAL
    assert np.max(np.abs(M @ M.T - np.eye(3))) < 1e-14
    # The printed Hipparcos matrix A_G' (ESA 1997 vol. 1, eq. 1.5.11; quoted
    # from memory to 10 decimals).
    printed = np.array([
        [-0.0548755604, -0.8734370902, -0.4838350155],
        [+0.4941094279, -0.4448296300, +0.7469822445],
        [-0.8676661490, -0.1980763734, +0.4559837762],
    ])
    dev_printed = np.max(np.abs(M - printed))
    assert dev_printed < 2e-10, dev_printed

    import astropy.units as u
    from astropy.coordinates import FK4, ICRS, LSRK, Galactic, SkyCoord

    # Astropy's Galactic frame is tied to FK4/FK5, not to the Hipparcos matrix:
    # the two differ by some tens of mas.
    rng = np.random.default_rng(7)
    ra = rng.uniform(0, 360, 200)
    dec = np.degrees(np.arcsin(rng.uniform(-1, 1, 200)))
    ap = SkyCoord(ra=ra * u.deg, dec=dec * u.deg, frame="icrs").galactic
    ng_ap = np.array(ap.cartesian.xyz.value)
    ng_ours = M @ radec_to_unit(ra, dec)
    sep_mas = np.degrees(np.arccos(np.clip(np.sum(ng_ap * ng_ours, axis=0), -1, 1))) * 3.6e6
    assert sep_mas.max() < 100.0, sep_mas.max()

    # Standard solar motion: 20 km/s toward (18h, +30 deg), FK4 equinox B1900
    # (astropy's FK4 with its default obstime = equinox), taken to ICRS by
    # astropy and to Galactic axes by the Hipparcos matrix.
    c = SkyCoord(ra=270.0 * u.deg, dec=30.0 * u.deg, frame=FK4(equinox="B1900"))
    ic = c.transform_to(ICRS())
    n_icrs = radec_to_unit(ic.ra.deg, ic.dec.deg)
    v_std = 20.0 * (M @ n_icrs)
    # Same through astropy's Galactic frame, directly from FK4 (astropy ties
    # Galactic to FK4 without E-terms at B1950, so this path differs from the
    # one through ICRS by a fraction of an arcsecond, ~2e-5 km/s here).
    g = c.transform_to(Galactic())
    v_std_ap = 20.0 * np.array(g.cartesian.xyz.value)
    assert np.max(np.abs(v_std - v_std_ap)) < 1e-4
    # Astropy's LSRK frame (Gordon 1975): its velocity offset from ICRS, in
    # ICRS axes, taken to Galactic axes by the Hipparcos matrix, is V_std.
    from astropy.coordinates.builtin_frames.lsr import V_OFFSET_LSRK
    off = np.array([V_OFFSET_LSRK.d_x.value, V_OFFSET_LSRK.d_y.value, V_OFFSET_LSRK.d_z.value])
    assert np.max(np.abs(M @ off - v_std)) < 1e-6, (M @ off, v_std)
    # And through the frame itself: v_LSR = v_helio + V_std . n.
    tgt = SkyCoord(ra=30.0 * u.deg, dec=-20.0 * u.deg, distance=1 * u.kpc,
                   pm_ra_cosdec=0 * u.mas / u.yr, pm_dec=0 * u.mas / u.yr,
                   radial_velocity=0 * u.km / u.s, frame="icrs")
    rv_lsrk = tgt.transform_to(LSRK()).radial_velocity.to(u.km / u.s).value
    n_tgt = M @ radec_to_unit(30.0, -20.0)
    assert abs(rv_lsrk - float(v_std @ n_tgt)) < 1e-6, (rv_lsrk, v_std @ n_tgt)
    # Projections of a velocity onto the line of sight and the Galactic and
    # equatorial proper-motion axes, against astropy's frame transformations
    # (astropy's Galactic axes differ from the Hipparcos ones by ~25 mas and
    # its 1 au/yr is 4.740470463533 km/s, so agreement is to ~1e-6 relative).
    from astropy.coordinates import CartesianDifferential, CartesianRepresentation
    worst = 0.0
    for j in range(20):
        l_deg, b_deg = rng.uniform(0, 360), rng.uniform(-10, 10)
        d = rng.uniform(0.2, 20.0)
        v = rng.normal(0.0, 150.0, 3)
        n, lh, bh, ah, dh = source_axes(l_deg, b_deg)
        pos = d * n
        rep = CartesianRepresentation(pos * u.kpc, differentials=CartesianDifferential(v * u.km / u.s))
        gc = SkyCoord(rep, frame="galactic")
        gs = gc.represent_as("spherical", "sphericalcoslat")
        ours_g = np.array([v @ n, v @ lh / (K_PM * d), v @ bh / (K_PM * d)])
        ap_g = np.array([gs.differentials["s"].d_distance.to(u.km / u.s).value,
                         gs.differentials["s"].d_lon_coslat.to(u.mas / u.yr).value,
                         gs.differentials["s"].d_lat.to(u.mas / u.yr).value])
        ic2 = gc.icrs
        ours_e = np.array([v @ ah / (K_PM * d), v @ dh / (K_PM * d)])
        ap_e = np.array([ic2.pm_ra_cosdec.to(u.mas / u.yr).value, ic2.pm_dec.to(u.mas / u.yr).value])
        scale = np.linalg.norm(v) / (K_PM * d)
        worst = max(worst, abs(ours_g[0] - ap_g[0]) / np.linalg.norm(v),
                    float(np.max(np.abs(ours_g[1:] - ap_g[1:]))) / scale,
                    float(np.max(np.abs(ours_e - ap_e))) / scale)
    assert worst < 2e-6, worst
    return v_std, dev_printed, sep_mas.max(), worst


def radec_to_unit(ra_deg, dec_deg):
    a = np.radians(ra_deg)
    d = np.radians(dec_deg)
    return np.array([np.cos(d) * np.cos(a), np.cos(d) * np.sin(a), np.sin(d)])


def unit_to_angles(v):
    lon = math.degrees(math.atan2(v[1], v[0])) % 360.0
    lat = math.degrees(math.asin(max(-1.0, min(1.0, v[2]))))
    return lon, lat


def radec_to_lb(ra_deg, dec_deg):
    return unit_to_angles(M_GAL @ radec_to_unit(ra_deg, dec_deg))


def lb_to_radec(l_deg, b_deg):
    return unit_to_angles(M_GAL.T @ radec_to_unit(l_deg, b_deg))


def source_axes(l_deg, b_deg):
    """n, l-hat, b-hat, alpha-hat, delta-hat at a source, in Galactic axes."""
    l = math.radians(l_deg)
    b = math.radians(b_deg)
    cl, sl, cb, sb = math.cos(l), math.sin(l), math.cos(b), math.sin(b)
    n = np.array([cb * cl, cb * sl, sb])
    lhat = np.array([-sl, cl, 0.0])
    bhat = np.array([-sb * cl, -sb * sl, cb])
    # Equatorial east and north at the source: alpha-hat = z_ICRS x n / |.|,
    # delta-hat = n x alpha-hat, with z_ICRS (the celestial pole) in Galactic axes.
    pole = M_GAL[:, 2]
    ah = np.cross(pole, n)
    ah /= np.linalg.norm(ah)
    dh = np.cross(n, ah)
    return n, lhat, bhat, ah, dh


# ---------------------------------------------------------------------------
# Model pieces (vectorised over distance)
# ---------------------------------------------------------------------------


def log_logistic(x):
    """log S(x), S(x) = 1 / (1 + exp(-x))."""
    return -np.logaddexp(0.0, -x)


def arm_geometry(params):
    """Per-arm constants at a parameter set (angles in radians)."""
    tau = math.radians(SETTINGS["arm_end_softening_deg"])
    win = SETTINGS["winding_window_tau"] * tau
    out = []
    for a in ARMS:
        nm = a["name"]
        bs = math.radians(a["azimuth_range_deg"][0])
        be = math.radians(a["azimuth_range_deg"][1])
        dbeta = be - bs
        g = {
            "name": nm,
            "bstart": bs, "bend": be, "lo": bs - win, "hi": be + win, "tau": tau,
            "logZ": math.log(dbeta / (-math.expm1(-dbeta / tau))),
            "lnRref": math.log(params[nm + "_Rref"]),
            "bref": math.radians(a["ref_azimuth_deg"]),
            "psi1": math.radians(params[nm + "_pitch"]),
            "kinked": a["kinked"],
            "width": params[nm + "_width"],
            "logf": math.log(params["f_" + nm]),
        }
        if a["kinked"]:
            g["psi2"] = math.radians(params[nm + "_pitch2"])
            g["bkink"] = math.radians(params[nm + "_kink"])
        else:
            g["psi2"] = g["psi1"]
            g["bkink"] = math.inf
        g["t1"] = math.tan(g["psi1"])
        g["t2"] = math.tan(g["psi2"])
        g["c1"] = math.cos(g["psi1"])
        g["c2"] = math.cos(g["psi2"])
        out.append(g)
    return out


def arm_lnR(g, beta):
    """ln R_k(beta): ln Rref - int_{bref}^{beta} tan psi(b') db'."""
    if not g["kinked"]:
        return g["lnRref"] - (beta - g["bref"]) * g["t1"]
    bk = g["bkink"]
    br = g["bref"]
    integral = (g["t1"] * (np.minimum(beta, bk) - min(br, bk))
                + g["t2"] * (np.maximum(beta, bk) - max(br, bk)))
    return g["lnRref"] - integral


def log_arm_density(g, R, beta, R0, slope):
    """log rho_k(R, beta) (kpc^-2), log-sum-exp over the counted windings."""
    two_pi = 2.0 * math.pi
    nmin = math.ceil((g["lo"] - math.pi) / two_pi) - 1
    nmax = math.floor((g["hi"] + math.pi) / two_pi) + 1
    ns = np.arange(nmin, nmax + 1)
    bn = beta[None, :] + two_pi * ns[:, None]
    dist = np.maximum(np.maximum(g["lo"] - bn, bn - g["hi"]), 0.0)
    keep = dist == 0.0
    none = ~keep.any(axis=0)
    if none.any():
        idx = np.argmin(dist[:, none], axis=0)
        cols = np.nonzero(none)[0]
        keep[idx, cols] = True
    # Evaluate only the counted windings; the others stay at -inf.
    jn, jc = np.nonzero(keep)
    bk = bn[jn, jc]
    Rk = R[jc]
    lnRk = arm_lnR(g, bk)
    cpsi = np.where(bk < g["bkink"], g["c1"], g["c2"])
    w = np.maximum(g["width"] + slope * (Rk - R0), 0.01)
    delta = (Rk - np.exp(lnRk)) * cpsi
    tau = g["tau"]
    logE = log_logistic((bk - g["bstart"]) / tau) + log_logistic((g["bend"] - bk) / tau)
    term = np.full(bn.shape, -np.inf)
    term[jn, jc] = (-0.5 * (delta / w) ** 2 - np.log(w) - LN2PI_HALF
                    + np.log(cpsi) + logE - g["logZ"] - np.log(Rk))
    mx = term.max(axis=0)
    return mx + np.log(np.sum(np.exp(term - mx[None, :]), axis=0))


def log_field_density(R):
    h = SETTINGS["field_scale_length"]
    return -R / h - math.log(2.0 * math.pi * h * h)


def circular_speed(R, params):
    Rc = SETTINGS["R_core"]
    th0, dth, R0 = params["Theta0"], params["dTheta_dR"], params["R0"]
    lin = th0 + dth * (R - R0)
    core = (th0 + dth * (Rc - R0)) * R / Rc
    return np.where(R < Rc, core, lin)


def sigma2_intrinsic(R, params):
    sb = SETTINGS["sigma_bar"]
    x = (SETTINGS["R_inner"] - R) / SETTINGS["s_bar"]
    return params["sigma_vir"] ** 2 + sb * sb * np.exp(log_logistic(x))


def kinematic_model(src, d, params):
    """Geometry and model kinematics along a line of sight, d (kpc) array.

    Returns R, beta, dv (3 x N relative velocity, km/s) and sigma^2(R).
    """
    R0 = params["R0"]
    cbd = d * src["cb"]
    Px = cbd * src["cl"]
    Py = cbd * src["sl"]
    X = R0 - Px
    R = np.hypot(X, Py)
    beta = np.arctan2(Py, X)
    cbeta = X / R
    sbeta = Py / R
    th = circular_speed(R, params) + params["Vs"]
    Us = params["Us"]
    vx = th * sbeta + Us * cbeta - params["Usun"]
    vy = th * cbeta - Us * sbeta - (params["Theta0"] + params["Vsun"])
    vz = np.full_like(d, params["Ws"] - params["Wsun"])
    return R, beta, np.array([vx, vy, vz]), sigma2_intrinsic(R, params)


def log_error_density(r, s2, model, nu):
    """log p(r) under the error model; s2 is the effective variance."""
    if model == "gaussian":
        return -0.5 * r * r / s2 - 0.5 * np.log(s2) - LN2PI_HALF
    if model == "tolerant":
        # p(r) = (1 - exp(-R^2/2)) / (R^2 sigma sqrt(2 pi)); x = R^2 / 2
        x = 0.5 * r * r / s2
        xs = np.where(x > 1e-10, x, 1.0)
        core = np.where(x > 1e-10, np.log(-np.expm1(-xs)) - np.log(xs), -0.5 * x)
        return core - math.log(2.0) - 0.5 * np.log(s2) - LN2PI_HALF
    if model == "student":
        c = gammaln(0.5 * (nu + 1)) - gammaln(0.5 * nu) - 0.5 * math.log(nu * math.pi)
        return c - 0.5 * np.log(s2) - 0.5 * (nu + 1) * np.log1p(r * r / (nu * s2))
    raise ValueError(model)


def log_integrand(src, u, params, variant, geo=None):
    """log of the integrand in u for each membership; returns (total, parts).

    parts is a list of (label, log f_m(u)) with the membership fraction included.
    """
    mode, errmodel = VARIANTS[variant]
    nu = SETTINGS["student_nu"]
    d = np.exp(u)
    plx_term = (-0.5 * ((src["plx"] - 1.0 / d) / src["plx_err"]) ** 2
                - math.log(src["plx_err"]) - LN2PI_HALF)
    R, beta, dv, s2int = kinematic_model(src, d, params)
    logK = np.zeros_like(d)
    for t in src["terms"]:
        e = t["e"]
        proj = e[0] * dv[0] + e[1] * dv[1] + e[2] * dv[2]
        if t["kind"] == "pm":
            kd = K_PM * d
            model = proj / kd
            s2 = t["err"] ** 2 + s2int / (kd * kd)
        else:
            model = proj + t["offset"]
            s2 = t["err"] ** 2 + s2int
        logK = logK + log_error_density(t["obs"] - model, s2, errmodel, nu)
    base = plx_term + logK
    if mode == "parallax":
        dmin, dmax = SETTINGS["distance_min"], SETTINGS["distance_max"]
        tot = base + u - math.log(dmax - dmin)
        return tot, [("prior", tot)]
    if geo is None:
        geo = arm_geometry(params)
    if mode == "galaxy":
        jac = 2.0 * (u + math.log(src["cb"]))
    else:
        # Volume element d^3 cos b in u = ln d, times the layer's density at
        # the height z = d sin b + z_sun.
        H = params["scale_height"]
        z = d * src["sb"] + params["z_sun"]
        jac = 3.0 * u + math.log(src["cb"]) - 0.5 * (z / H) ** 2 - math.log(H) - LN2PI_HALF
        if mode == "vertical_selection":
            jac = jac + log_logistic((SELECTION["half_distance"] - d) / SELECTION["softness"])
    parts = []
    label = src["arm"]
    if label is None:
        parts.append(("field", base + jac + math.log(params["f_field"]) + log_field_density(R)))
    for g in geo:
        if label is not None and label != g["name"]:
            continue
        parts.append((g["name"], base + jac + g["logf"]
                      + log_arm_density(g, R, beta, params["R0"], params["width_slope"])))
    stack = np.array([p[1] for p in parts])
    mx = stack.max(axis=0)
    tot = mx + np.log(np.sum(np.exp(stack - mx[None, :]), axis=0))
    return tot, parts


# ---------------------------------------------------------------------------
# The same integrand, scalar and in plain Python (for scipy quad)
# ---------------------------------------------------------------------------


def scalar_log_integrand_factory(src, params, variant):
    mode, errmodel = VARIANTS[variant]
    nu = SETTINGS["student_nu"]
    st_c = (math.lgamma(0.5 * (nu + 1)) - math.lgamma(0.5 * nu)
            - 0.5 * math.log(nu * math.pi))
    geo = arm_geometry(params)
    R0 = params["R0"]
    th0, dth = params["Theta0"], params["dTheta_dR"]
    Rc = SETTINGS["R_core"]
    thc_over_Rc = (th0 + dth * (Rc - R0)) / Rc
    Vs, Us = params["Vs"], params["Us"]
    Usun, Vsun_tot, dWz = params["Usun"], th0 + params["Vsun"], params["Ws"] - params["Wsun"]
    svir2 = params["sigma_vir"] ** 2
    sbar2 = SETTINGS["sigma_bar"] ** 2
    Rin, sbar_s = SETTINGS["R_inner"], SETTINGS["s_bar"]
    plx, plx_err = src["plx"], src["plx_err"]
    plx_c = -math.log(plx_err) - LN2PI_HALF
    cb, cl, sl = src["cb"], src["cl"], src["sl"]
    lncb2 = 2.0 * math.log(cb)
    sb = src["sb"]
    if mode != "galaxy" and mode != "parallax":
        H, zsun = params["scale_height"], params["z_sun"]
        layer_c = math.log(cb) - math.log(H) - LN2PI_HALF
    sel_D, sel_s = SELECTION["half_distance"], SELECTION["softness"]
    terms = [(t["kind"] == "pm", t["e"][0], t["e"][1], t["e"][2], t["offset"], t["obs"],
              t["err"] ** 2) for t in src["terms"]]
    h = SETTINGS["field_scale_length"]
    log_field_c = -math.log(2.0 * math.pi * h * h)
    slope = params["width_slope"]
    dmin, dmax = SETTINGS["distance_min"], SETTINGS["distance_max"]
    log_prior_c = -math.log(dmax - dmin)
    label = src["arm"]
    use_field = label is None
    arms = [g for g in geo if label is None or g["name"] == label]
    log_ff = math.log(params["f_field"])
    two_pi = 2.0 * math.pi
    log_half = math.log(2.0)

    def lls(x):
        # log S(x)
        if x > 0:
            return -math.log1p(math.exp(-x))
        return x - math.log1p(math.exp(x))

    def err_logp(r, s2):
        if errmodel == "gaussian":
            return -0.5 * r * r / s2 - 0.5 * math.log(s2) - LN2PI_HALF
        if errmodel == "tolerant":
            x = 0.5 * r * r / s2
            if x > 1e-10:
                core = math.log(-math.expm1(-x)) - math.log(x)
            else:
                core = -0.5 * x
            return core - log_half - 0.5 * math.log(s2) - LN2PI_HALF
        return st_c - 0.5 * math.log(s2) - 0.5 * (nu + 1) * math.log1p(r * r / (nu * s2))

    def arm_logrho(g, R, beta):
        lo, hi = g["lo"], g["hi"]
        n_first = math.ceil((lo - beta) / two_pi)
        n_last = math.floor((hi - beta) / two_pi)
        if n_last < n_first:
            below = beta + two_pi * (n_first - 1)
            above = beta + two_pi * n_first
            ns = [n_first - 1] if (lo - below) < (above - hi) else [n_first]
        else:
            ns = range(n_first, n_last + 1)
        w = g["width"] + slope * (R - R0)
        if w < 0.01:
            w = 0.01
        vals = []
        for n in ns:
            bn = beta + two_pi * n
            if g["kinked"]:
                bk, br = g["bkink"], g["bref"]
                lnRk = g["lnRref"] - (g["t1"] * (min(bn, bk) - min(br, bk))
                                      + g["t2"] * (max(bn, bk) - max(br, bk)))
                cpsi = g["c1"] if bn < bk else g["c2"]
            else:
                lnRk = g["lnRref"] - (bn - g["bref"]) * g["t1"]
                cpsi = g["c1"]
            delta = (R - math.exp(lnRk)) * cpsi
            tau = g["tau"]
            vals.append(-0.5 * (delta / w) ** 2 - math.log(w) - LN2PI_HALF + math.log(cpsi)
                        + lls((bn - g["bstart"]) / tau) + lls((g["bend"] - bn) / tau)
                        - g["logZ"] - math.log(R))
        m = max(vals)
        return m + math.log(sum(math.exp(v - m) for v in vals))

    def logf(u):
        d = math.exp(u)
        a = (plx - 1.0 / d) / plx_err
        base = -0.5 * a * a + plx_c
        cbd = d * cb
        X = R0 - cbd * cl
        Py = cbd * sl
        R = math.hypot(X, Py)
        beta = math.atan2(Py, X)
        cbeta, sbeta = X / R, Py / R
        th = (thc_over_Rc * R if R < Rc else th0 + dth * (R - R0)) + Vs
        vx = th * sbeta + Us * cbeta - Usun
        vy = th * cbeta - Us * sbeta - Vsun_tot
        s2int = svir2 + sbar2 * math.exp(lls((Rin - R) / sbar_s))
        kd = K_PM * d
        for is_pm, ex, ey, ez, off, obs, e2 in terms:
            proj = ex * vx + ey * vy + ez * dWz
            if is_pm:
                base += err_logp(obs - proj / kd, e2 + s2int / (kd * kd))
            else:
                base += err_logp(obs - proj - off, e2 + s2int)
        if mode == "parallax":
            return base + u + log_prior_c
        if mode == "galaxy":
            common = base + 2.0 * u + lncb2
        else:
            zz = (d * sb + zsun) / H
            common = base + 3.0 * u + layer_c - 0.5 * zz * zz
            if mode == "vertical_selection":
                common += lls((sel_D - d) / sel_s)
        vals = []
        if use_field:
            vals.append(common + log_ff - R / h + log_field_c)
        for g in arms:
            vals.append(common + g["logf"] + arm_logrho(g, R, beta))
        m = max(vals)
        return m + math.log(sum(math.exp(v - m) for v in vals))

    return logf


VARIANTS = {
    "galaxy_gaussian": ("galaxy", "gaussian"),
    "galaxy_tolerant": ("galaxy", "tolerant"),
    "galaxy_student4": ("galaxy", "student"),
    "parallax_gaussian": ("parallax", "gaussian"),
    "vertical_gaussian": ("vertical", "gaussian"),
    "vertical_selection": ("vertical_selection", "gaussian"),
}

# ---------------------------------------------------------------------------
# Mock catalog
# ---------------------------------------------------------------------------


def model_observables(l_deg, b_deg, d, params, v_std):
    """Mean-motion observables of a source at (l, b, d) and sigma(R)."""
    n, lh, bh, ah, dh = source_axes(l_deg, b_deg)
    src = {"cl": math.cos(math.radians(l_deg)), "sl": math.sin(math.radians(l_deg)),
           "cb": math.cos(math.radians(b_deg))}
    R, beta, dv, s2 = kinematic_model(src, np.array([d]), params)
    dv = dv[:, 0]
    kd = K_PM * d
    return {
        "vhelio": float(dv @ n), "vlsr": float(dv @ n + v_std @ n),
        "pml": float(dv @ lh / kd), "pmb": float(dv @ bh / kd),
        "pmra": float(dv @ ah / kd), "pmdec": float(dv @ dh / kd),
        "sigma": math.sqrt(float(s2[0])), "R": float(R[0]), "axes": (n, lh, bh, ah, dh),
    }


def make_mock(v_std):
    rng = np.random.default_rng(MOCK_SEED)
    P = TRUTH
    R0 = P["R0"]
    comps = ["field"] + ARM_NAMES
    fr = np.array([P["f_field"]] + [P["f_" + a] for a in ARM_NAMES])
    which = rng.choice(len(comps), size=N_SOURCES, p=fr)
    geo = {g["name"]: g for g in arm_geometry(P)}
    rows = []
    truths = []
    for i in range(N_SOURCES):
        comp = comps[which[i]]
        while True:
            if comp == "field":
                R = rng.gamma(2.0, SETTINGS["field_scale_length"])
                beta = rng.uniform(-math.pi, math.pi)
            else:
                g = geo[comp]
                # beta from E_k(beta) (softened ends), by rejection
                while True:
                    bcand = rng.uniform(g["lo"], g["hi"])
                    lE = (log_logistic((bcand - g["bstart"]) / g["tau"])
                          + log_logistic((g["bend"] - bcand) / g["tau"]))
                    if rng.uniform() < math.exp(lE):
                        break
                lnRk = float(arm_lnR(g, np.array([bcand]))[0])
                cpsi = g["c1"] if bcand < g["bkink"] else g["c2"]
                R = math.exp(lnRk) + rng.normal(0.0, g["width"]) / cpsi
                beta = bcand
            if R <= 0.2:
                continue
            Px = R0 - R * math.cos(beta)
            Py = R * math.sin(beta)
            z = rng.normal(0.0, 0.03)
            d = math.sqrt(Px * Px + Py * Py + z * z)
            if not (0.3 <= d <= 25.0):
                continue
            b = math.degrees(math.asin(z / d))
            if abs(b) > 5.0:
                continue
            l = math.degrees(math.atan2(Py, Px)) % 360.0
            break
        truths.append({"comp": comp, "d": d, "R": R})
        rows.append({"l_true": l, "b_true": b, "d": d, "comp": comp})

    # Column choices.
    name_of = lambda i: "mock-%04d" % (i + 1)
    use_radec = rng.uniform(size=N_SOURCES) < 0.5
    pm_equ = rng.uniform(size=N_SOURCES) < 0.5
    v_lsr = rng.uniform(size=N_SOURCES) < 0.6
    arm_idx = [i for i in range(N_SOURCES) if rows[i]["comp"] != "field"]
    labelled = set(rng.choice(arm_idx, size=30, replace=False).tolist())
    rest = [i for i in range(N_SOURCES) if i not in labelled]
    perm = rng.permutation(rest)
    all_blank = {int(perm[0])}
    no_v = set(int(x) for x in perm[1:9])
    no_pm = set(int(x) for x in perm[9:17])
    one_pm = set(int(x) for x in perm[17:20])
    question = set(int(x) for x in perm[20:23])

    out = []
    for i, r in enumerate(rows):
        d = r["d"]
        rec = {"name": name_of(i)}
        if use_radec[i]:
            ra, dec = lb_to_radec(r["l_true"], r["b_true"])
            rec["ra"] = "%.7f" % ra
            rec["dec"] = "%.7f" % dec
            l, b = radec_to_lb(float(rec["ra"]), float(rec["dec"]))
        else:
            rec["l"] = "%.7f" % r["l_true"]
            rec["b"] = "%.7f" % r["b_true"]
            l, b = float(rec["l"]), float(rec["b"])
        obs = model_observables(l, b, d, TRUTH, v_std)
        n, lh, bh, ah, dh = obs["axes"]
        # Parallax survey-like errors, growing with distance.
        s_plx = (0.012 + 0.004 * d) * math.exp(rng.normal(0.0, 0.15))
        rec["parallax"] = "%.5f" % (1.0 / d + rng.normal(0.0, s_plx))
        rec["parallax_err"] = "%.5f" % s_plx
        # Intrinsic motion: isotropic 3-D Gaussian with sigma(R).
        pec = rng.normal(0.0, obs["sigma"], size=3)
        kd = K_PM * d
        s_pm = min(max((0.05 + 0.02 * d) * math.exp(rng.normal(0.0, 0.3)), 0.04), 0.5)
        s_pm2 = min(max(s_pm * math.exp(rng.normal(0.0, 0.1)), 0.04), 0.5)
        if pm_equ[i]:
            p1 = obs["pmra"] + pec @ ah / kd + rng.normal(0.0, s_pm)
            p2 = obs["pmdec"] + pec @ dh / kd + rng.normal(0.0, s_pm2)
            keys = ("pmra", "pmdec")
        else:
            p1 = obs["pml"] + pec @ lh / kd + rng.normal(0.0, s_pm)
            p2 = obs["pmb"] + pec @ bh / kd + rng.normal(0.0, s_pm2)
            keys = ("pml", "pmb")
        s_v = rng.uniform(3.0, 10.0)
        vkey = "vlsr" if v_lsr[i] else "vhelio"
        vval = obs[vkey] + pec @ n + rng.normal(0.0, s_v)
        if i not in all_blank and i not in no_pm:
            rec[keys[0]] = "%.4f" % p1
            rec[keys[0] + "_err"] = "%.3f" % s_pm
            if i not in one_pm:
                rec[keys[1]] = "%.4f" % p2
                rec[keys[1] + "_err"] = "%.3f" % s_pm2
        if i not in all_blank and i not in no_v:
            rec[vkey] = "%.2f" % vval
            rec[vkey + "_err"] = "%.2f" % s_v
        if i in labelled:
            rec["arm"] = r["comp"]
        elif i in question:
            rec["arm"] = "?"
        out.append(rec)
    return out, truths


CSV_COLUMNS = ["name", "ra", "dec", "l", "b", "parallax", "parallax_err",
               "pmra", "pmra_err", "pmdec", "pmdec_err", "pml", "pml_err", "pmb", "pmb_err",
               "vlsr", "vlsr_err", "vhelio", "vhelio_err", "arm"]


def write_mock(path, recs):
    with open(path, "w", newline="") as fh:
        fh.write("# mirabilis mock catalog: invented sources drawn from the model at\n")
        fh.write("# params_truth.json with setup.json (gen_likelihood_ref.py)\n")
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(CSV_COLUMNS)
        for r in recs:
            w.writerow([r.get(c, "") for c in CSV_COLUMNS])


def read_mock(path, v_std):
    """Parse mock.csv into per-source data for the likelihood."""
    with open(path) as fh:
        lines = [ln for ln in fh if not ln.startswith("#")]
    rdr = csv.DictReader(lines)
    srcs = []
    for row in rdr:
        get = lambda k: row[k].strip() if row.get(k) is not None else ""
        if get("ra") != "":
            l, b = radec_to_lb(float(get("ra")), float(get("dec")))
        else:
            l, b = float(get("l")) % 360.0, float(get("b"))
        n, lh, bh, ah, dh = source_axes(l, b)
        terms = []
        for key, e in (("pmra", ah), ("pmdec", dh), ("pml", lh), ("pmb", bh)):
            if get(key) != "":
                terms.append({"kind": "pm", "e": e, "offset": 0.0, "obs": float(get(key)),
                              "err": float(get(key + "_err")), "key": key})
        if get("vlsr") != "":
            terms.append({"kind": "v", "e": n, "offset": float(v_std @ n),
                          "obs": float(get("vlsr")), "err": float(get("vlsr_err")),
                          "key": "vlsr"})
        if get("vhelio") != "":
            terms.append({"kind": "v", "e": n, "offset": 0.0, "obs": float(get("vhelio")),
                          "err": float(get("vhelio_err")), "key": "vhelio"})
        arm = get("arm")
        srcs.append({
            "name": get("name"), "l": l, "b": b,
            "cl": math.cos(math.radians(l)), "sl": math.sin(math.radians(l)),
            "cb": math.cos(math.radians(b)), "sb": math.sin(math.radians(b)),
            "plx": float(get("parallax")), "plx_err": float(get("parallax_err")),
            "terms": terms, "arm": None if arm in ("", "?") else arm,
        })
    return srcs


# ---------------------------------------------------------------------------
# Parameter sets
# ---------------------------------------------------------------------------

PARAM_ORDER = (["R0", "Theta0", "dTheta_dR", "Usun", "Vsun", "Wsun", "Us", "Vs", "Ws",
                "sigma_vir", "width_slope"]
               + [k for a in ARMS for k in (
                   [a["name"] + "_Rref", a["name"] + "_pitch"]
                   + ([a["name"] + "_pitch2", a["name"] + "_kink"] if a["kinked"] else [])
                   + [a["name"] + "_width"])]
               + ["f_field"] + ["f_" + a for a in ARM_NAMES])


def draw_sets(seed, n):
    """Normal draws around the truth with the pilot spreads.

    Fractions are perturbed in log space, log f_m + N(0, s_m / f_m) (s_m the
    spread of f_m), then renormalised, so each set is a valid simplex.
    width_slope is WIDTH_SLOPE_ALT in odd-numbered draws and 0 otherwise.
    """
    rng = np.random.default_rng(seed)
    sets = []
    for j in range(n):
        p = {}
        for k in PARAM_ORDER:
            if k.startswith("f_") or k == "width_slope":
                continue
            v = TRUTH[k] + rng.normal(0.0, PILOT_SPREADS[k])
            p[k] = v
        p["sigma_vir"] = abs(p["sigma_vir"])
        fkeys = ["f_field"] + ["f_" + a for a in ARM_NAMES]
        logs = np.array([math.log(TRUTH[k]) + rng.normal(0.0, PILOT_SPREADS[k] / TRUTH[k])
                         for k in fkeys])
        f = np.exp(logs - logs.max())
        f /= f.sum()
        fr = [round(float(x), 6) for x in f]
        fr[0] = round(1.0 - sum(fr[1:]), 6)
        for k, x in zip(fkeys, fr):
            p[k] = x
        p["width_slope"] = WIDTH_SLOPE_ALT if (j + 1) % 2 == 1 else 0.0
        sets.append({k: round(float(p[k]), 6) if not k.startswith("f_") else p[k]
                     for k in PARAM_ORDER})
    return sets


def add_vertical(sets, seed):
    """Append scale_height and z_sun to each set: normal draws around
    VERTICAL_TRUTH with VERTICAL_SPREADS (scale_height kept above 5 pc), from
    their own seed so that the other parameters are untouched."""
    rng = np.random.default_rng(seed)
    for p in sets:
        h = VERTICAL_TRUTH["scale_height"] + rng.normal(0.0, VERTICAL_SPREADS["scale_height"])
        p["scale_height"] = round(max(h, 0.005), 6)
        p["z_sun"] = round(VERTICAL_TRUTH["z_sun"] + rng.normal(0.0, VERTICAL_SPREADS["z_sun"]), 6)
    return sets


def write_json(path, obj):
    with open(path, "w") as fh:
        json.dump(obj, fh, indent=2)
        fh.write("\n")


# ---------------------------------------------------------------------------
# Integration
# ---------------------------------------------------------------------------

LN_DMIN = math.log(SETTINGS["distance_min"])
LN_DMAX = math.log(SETTINGS["distance_max"])
_GL_X, _GL_W = np.polynomial.legendre.leggauss(GL_ORDER)


def radius_crossings(src, R0, Rt):
    """u = ln d where the line of sight crosses the cylinder R = Rt."""
    disc = Rt * Rt - (R0 * src["sl"]) ** 2
    out = []
    if disc > 0:
        for sgn in (-1.0, 1.0):
            dp = R0 * src["cl"] + sgn * math.sqrt(disc)
            if dp > 0:
                d = dp / src["cb"]
                if SETTINGS["distance_min"] < d < SETTINGS["distance_max"]:
                    out.append(math.log(d))
    return out


def azimuth_crossings(src, R0, bt):
    """u = ln d where the line of sight crosses the azimuth bt (mod 2 pi)."""
    out = []
    den = math.sin(math.atan2(src["sl"], src["cl"]) + bt)
    if den != 0.0:
        dp = R0 * math.sin(bt) / den
        if dp > 0:
            d = dp / src["cb"]
            X, Py = R0 - dp * src["cl"], dp * src["sl"]
            same = math.cos(math.atan2(Py, X) - bt) > 0.0
            if same and SETTINGS["distance_min"] < d < SETTINGS["distance_max"]:
                out.append(math.log(d))
    return out


def feature_points(src, params, variant="galaxy_gaussian"):
    """Distances where the integrand has a kink or a jump, as u = ln d.

    The rotation curve bends at R_core; an arm width meets its floor of
    0.01 kpc at R0 + (0.01 - w) / g; a kinked arm's density jumps where the
    line of sight crosses the kink azimuth (cos psi and the across-arm
    distance change there with the local pitch angle).
    """
    R0 = params["R0"]
    pts = radius_crossings(src, R0, SETTINGS["R_core"])
    g = params["width_slope"]
    for a in ARMS:
        if g != 0.0:
            Rt = R0 + (0.01 - params[a["name"] + "_width"]) / g
            if Rt > 0:
                pts += radius_crossings(src, R0, Rt)
        if a["kinked"]:
            pts += azimuth_crossings(src, R0, math.radians(params[a["name"] + "_kink"]))
    if VARIANTS[variant][0].startswith("vertical") and src["sb"] != 0.0:
        # The layer's density peaks where the sightline crosses the mid-plane.
        d0 = -params["z_sun"] / src["sb"]
        if SETTINGS["distance_min"] < d0 < SETTINGS["distance_max"]:
            pts.append(math.log(d0))
    return sorted(pts)


def gl_nodes(extra_edges):
    edges = np.linspace(LN_DMIN, LN_DMAX, GL_PANELS + 1)
    if extra_edges:
        edges = np.unique(np.concatenate([edges, np.array(extra_edges)]))
    a, b = edges[:-1], edges[1:]
    half = 0.5 * (b - a)
    mid = 0.5 * (b + a)
    x = (mid[:, None] + half[:, None] * _GL_X[None, :]).ravel()
    w = (half[:, None] * _GL_W[None, :]).ravel()
    return x, w


def local_maxima(u, y, floor):
    idx = np.nonzero((y[1:-1] > y[:-2]) & (y[1:-1] >= y[2:]) & (y[1:-1] > floor))[0] + 1
    return u[idx].tolist()


def integrate_source(args):
    """log L_i by quad and by dense Gauss-Legendre; returns (quad, gl, npoints)."""
    src, params, variant = args
    kinks = feature_points(src, params, variant)
    x, w = gl_nodes(kinks)
    tot, parts = log_integrand(src, x, params, variant)
    gmax = float(tot.max())
    I_gl = float(np.sum(w * np.exp(tot - gmax)))
    floor = gmax - PEAK_FLOOR
    pts = local_maxima(x, tot, floor)
    for _, p in parts:
        pts += local_maxima(x, p, floor)
    pts += kinks
    pts = sorted(set(round(p, 10) for p in pts if LN_DMIN < p < LN_DMAX))
    merged = []
    for p in pts:
        if not merged or p - merged[-1] > 1e-7:
            merged.append(p)
    logf = scalar_log_integrand_factory(src, params, variant)
    with warnings.catch_warnings():
        warnings.simplefilter("error", integrate.IntegrationWarning)
        I_q, err_q = integrate.quad(lambda uu: math.exp(logf(uu) - gmax), LN_DMIN, LN_DMAX,
                                    points=merged or None, limit=QUAD_LIMIT,
                                    epsabs=1e-13 * I_gl, epsrel=QUAD_EPSREL)
    return gmax + math.log(I_q), gmax + math.log(I_gl), len(merged), err_q / I_q


def check_scalar_vs_vector(srcs, params):
    """The two codings of the integrand must agree pointwise."""
    rng = np.random.default_rng(5)
    worst = 0.0
    for variant in VARIANTS:
        for s in srcs[::7]:
            u = rng.uniform(LN_DMIN, LN_DMAX, 40)
            v, _ = log_integrand(s, u, params, variant)
            f = scalar_log_integrand_factory(s, params, variant)
            sc = np.array([f(x) for x in u])
            worst = max(worst, float(np.max(np.abs(sc - v) / np.maximum(1.0, np.abs(v)))))
    assert worst < 1e-11, worst
    return worst


def check_arm_normalisation(params):
    """Each arm density integrates to ~1 over the plane (package model, Arms)."""
    R = np.linspace(5e-3, 40.0, 4000)
    beta = np.linspace(-math.pi, math.pi, 3601)[:-1]
    dR = R[1] - R[0]
    dB = beta[1] - beta[0]
    out = {}
    for g in arm_geometry(params):
        tot = 0.0
        for bb in np.array_split(beta, 48):
            BB, RR = np.meshgrid(bb, R, indexing="ij")
            lr = log_arm_density(g, RR.ravel(), BB.ravel(), params["R0"], params["width_slope"])
            tot += float(np.sum(np.exp(lr) * RR.ravel())) * dR * dB
        out[g["name"]] = tot
    return out


# ---------------------------------------------------------------------------
# Main
# ---------------------------------------------------------------------------


def main():
    t0 = time.time()
    v_std, dev_printed, sep_mas, proj = check_frames()
    print("Hipparcos matrix vs printed: %.2e; vs astropy Galactic: %.1f mas max" %
          (dev_printed, sep_mas))
    print("velocity projections vs astropy: max relative difference %.1e" % proj)
    print("V_std (Galactic x, y, z) = %.10f %.10f %.10f km/s" % tuple(v_std))

    setup = {
        "description": "Settings of the mirabilis likelihood reference (gen_likelihood_ref.py)",
        "rotation_curve": SETTINGS["rotation_curve"],
        "R_core": SETTINGS["R_core"],
        "R_inner": SETTINGS["R_inner"],
        "sigma_bar": SETTINGS["sigma_bar"],
        "s_bar": SETTINGS["s_bar"],
        "arm_end_softening_deg": SETTINGS["arm_end_softening_deg"],
        "winding_window_tau": SETTINGS["winding_window_tau"],
        "field_scale_length": SETTINGS["field_scale_length"],
        "distance_min": SETTINGS["distance_min"],
        "distance_max": SETTINGS["distance_max"],
        "student_nu": SETTINGS["student_nu"],
        "k_kms_per_kpc_masyr": K_PM,
        "galactic_pole_ra_deg": NGP_RA_DEG,
        "galactic_pole_dec_deg": NGP_DEC_DEG,
        "l_of_ncp_deg": L_NCP_DEG,
        "icrs_to_galactic_matrix": [[float("%.15g" % x) for x in row] for row in M_GAL],
        "v_std_galactic_kms": [float("%.10f" % x) for x in v_std],
        "arms": ARMS,
        "pilot_spreads": PILOT_SPREADS,
        "fraction_draws": "log f_m + N(0, spread_m / f_m), renormalised to sum 1",
        "width_slope_in_draws": ("%g in odd-numbered draws (pilot_01, pilot_03, ..., "
                                 "test_01, test_03, ...), 0 elsewhere") % WIDTH_SLOPE_ALT,
        "seeds": {"mock": MOCK_SEED, "pilot": PILOT_SEED, "test": TEST_SEED},
        "variants": {
            "galaxy_gaussian": "distance_prior galaxy, gaussian error model",
            "galaxy_tolerant": "distance_prior galaxy, tolerant error model",
            "galaxy_student4": "distance_prior galaxy, student error model, nu = 4",
            "parallax_gaussian": ("distance_prior parallax (uniform in d on "
                                  "[distance_min, distance_max]), gaussian error model"),
            "vertical_gaussian": ("distance_prior galaxy, vertical gaussian: the layer "
                                  "N(d sin b + z_sun; 0, scale_height), volume element "
                                  "d^3 cos b; gaussian error model"),
            "vertical_selection": ("vertical_gaussian times the completeness "
                                   "1 / (1 + exp((d - half_distance) / softness))"),
        },
        "vertical_truth": VERTICAL_TRUTH,
        "vertical_spreads": VERTICAL_SPREADS,
        "vertical_seed": VERTICAL_SEED,
        "selection": SELECTION,
    }
    write_json(os.path.join(HERE, "setup.json"), setup)

    recs, truths = make_mock(v_std)
    write_mock(os.path.join(HERE, "mock.csv"), recs)
    truth = {k: TRUTH[k] for k in PARAM_ORDER}
    truth.update(VERTICAL_TRUTH)
    write_json(os.path.join(HERE, "params_truth.json"), truth)
    pilots = [truth] + add_vertical(draw_sets(PILOT_SEED, N_DRAWS), VERTICAL_SEED)
    tests = add_vertical(draw_sets(TEST_SEED, N_DRAWS), VERTICAL_SEED + 1)
    for j, p in enumerate(pilots):
        write_json(os.path.join(HERE, "params_pilot_%02d.json" % j), p)
    for j, p in enumerate(tests):
        write_json(os.path.join(HERE, "params_test_%02d.json" % j), p)

    # Everything below reads the files just written.
    srcs = read_mock(os.path.join(HERE, "mock.csv"), v_std)
    load = lambda f: json.load(open(os.path.join(HERE, f)))
    sets = [("truth", load("params_truth.json"))]
    sets += [("pilot_%02d" % j, load("params_pilot_%02d.json" % j)) for j in range(len(pilots))]
    sets += [("test_%02d" % j, load("params_test_%02d.json" % j)) for j in range(len(tests))]

    # Mock summary.
    plx = np.array([s["plx"] for s in srcs])
    sig = np.array([s["plx"] / s["plx_err"] for s in srcs])
    Rt = np.array([t["R"] for t in truths])
    dt = np.array([t["d"] for t in truths])
    lwrap = np.array([((s["l"] + 180.0) % 360.0) - 180.0 for s in srcs])
    comps = [t["comp"] for t in truths]
    print("mock: %d sources; field %d; %s" % (len(srcs), comps.count("field"),
          ", ".join("%s %d" % (a, comps.count(a)) for a in ARM_NAMES)))
    print("parallax significance %.2f .. %.1f (median %.2f); below 1: %d; negative: %d" %
          (sig.min(), sig.max(), np.median(sig), int(np.sum(sig < 1)), int(np.sum(plx < 0))))
    print("true distance %.2f .. %.2f kpc; R < 4 kpc: %d; |l| < 30 deg: %d; "
          "both: %d" % (dt.min(), dt.max(), int(np.sum(Rt < 4)), int(np.sum(np.abs(lwrap) < 30)),
                        int(np.sum((Rt < 4) & (np.abs(lwrap) < 30)))))
    print("labelled: %d; ra/dec rows: %d; equatorial pm rows: %d; vlsr rows: %d" % (
        sum(1 for r in recs if r.get("arm", "") not in ("", "?")),
        sum(1 for r in recs if "ra" in r), sum(1 for r in recs if "pmra" in r or "pmdec" in r),
        sum(1 for r in recs if "vlsr" in r)))
    print("rows with |b| max %.2f deg" % max(abs(s["b"]) for s in srcs))

    worst_sv = check_scalar_vs_vector(srcs, sets[0][1])
    print("scalar vs vectorised integrand: max rel. difference %.1e" % worst_sv)
    for nm, p in (("truth", sets[0][1]), ("pilot_01", sets[2][1])):
        norms = check_arm_normalisation(p)
        print("arm normalisation at %s (width_slope %g): %s" % (
            nm, p["width_slope"], ", ".join("%s %.6f" % kv for kv in norms.items())))

    jobs = []
    for set_name, p in sets:
        variants = ["galaxy_gaussian"]
        if set_name == "truth":
            variants += ["galaxy_tolerant", "galaxy_student4", "parallax_gaussian"]
        if not set_name.startswith("test_") or int(set_name[5:]) < N_VERTICAL_TESTS:
            variants += ["vertical_gaussian"]
        if set_name == "truth":
            variants += ["vertical_selection"]
        for v in variants:
            for s in srcs:
                jobs.append((set_name, v, s, p))
    # Rows of the in-plane variants from the existing file (see the usage above).
    old = {}
    old_path = os.path.join(HERE, "reference.csv")
    if "--all" not in sys.argv[1:] and os.path.exists(old_path):
        with open(old_path) as fh:
            for row in csv.reader(ln for ln in fh if not ln.startswith("#")):
                if row[0] != "set" and not row[1].startswith("vertical"):
                    old[(row[0], row[1], row[2])] = row[3]
    todo, checked = [], 0
    for k, (set_name, v, s, p) in enumerate(jobs):
        key = (set_name, v, s["name"])
        if key not in old:
            todo.append(k)
        elif checked % REUSE_CHECK == 0:
            todo.append(k)
            checked += 1
        else:
            checked += 1
    print("integrals to compute: %d of %d rows (%d reused)" % (len(todo), len(jobs), len(jobs) - len(todo)))
    with multiprocessing.Pool(2) as pool:
        done = pool.map(integrate_source, [(jobs[k][2], jobs[k][3], jobs[k][1]) for k in todo], chunksize=20)
    res = [None] * len(jobs)
    for k, r in zip(todo, done):
        res[k] = r
    for k, (set_name, v, s, _) in enumerate(jobs):
        key = (set_name, v, s["name"])
        if key in old:
            if res[k] is not None and "%.12g" % res[k][0] != old[key]:
                sys.exit("reused row %s: recomputed %.12g, file %s" % (key, res[k][0], old[key]))
            if res[k] is None:
                lq = float(old[key])
                res[k] = (lq, lq, 0, 0.0)
    worst = 0.0
    worst_at = None
    maxpts = 0
    maxrel = 0.0
    with open(os.path.join(HERE, "reference.csv"), "w", newline="") as fh:
        fh.write("# log L_i (natural log) per source, set and variant; gen_likelihood_ref.py\n")
        w = csv.writer(fh, lineterminator="\n")
        w.writerow(["set", "variant", "name", "logL"])
        for (set_name, v, s, _), (lq, lg, npts, rel) in zip(jobs, res):
            diff = abs(lq - lg)
            if diff > worst:
                worst, worst_at = diff, (set_name, v, s["name"], lq, lg)
            maxpts = max(maxpts, npts)
            maxrel = max(maxrel, rel)
            w.writerow([set_name, v, s["name"], "%.12g" % lq])
    print("quad vs Gauss-Legendre: max |difference| in log L = %.2e at %s" % (worst, worst_at))
    print("max break points given to quad: %d; max quad relative error estimate: %.1e" %
          (maxpts, maxrel))
    print("evaluations: %d; run time %.0f s" % (len(jobs), time.time() - t0))
    if worst > MAX_DISAGREEMENT:
        sys.exit("quad and Gauss-Legendre disagree by %.2e > %.0e" % (worst, MAX_DISAGREEMENT))


if __name__ == "__main__":
    main()
