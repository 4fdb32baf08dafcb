#!/usr/bin/python3
"""Reference vectors for the frames and kinematics of package model.

Run with Debian's python3-astropy (and python3-scipy, python3-numpy):

    /usr/bin/python3 testdata/frames/gen_frames.py

It writes, next to this script:

  frames_sources.csv    one row per random test source: its motion-model parameters,
                        Galactic position and distance, and what astropy computes for it
  frames_reference.json scalars and small tables: the standard solar motion from astropy's
                        FK4 frame, the IAU 1976 precession matrix from ERFA, the Hipparcos
                        rotation built with astropy's rotation_matrix, monotone cubic
                        (PCHIP) values from SciPy, and the library versions used

What astropy computes for each source
-------------------------------------
1. The source's Galactic position (l, b, d) is turned into astropy's Galactocentric frame,
   set up so that its axes are the Galactic axes: centre at distance R0 toward l = b = 0,
   z_sun = 0, and the roll about the x axis chosen so that the frame's z axis is the
   Galactic pole (checked below to 1e-12). From that frame's Cartesian position the script
   takes the cylindrical radius R and the azimuth beta = atan2(y, -x) (0 at the Sun).
2. The source's Galactocentric velocity is set from the model's definition (the one thing
   astropy does not know): V_src = (Theta(R) + Vs) v_rot + Us u_in + Ws z, where u_in points
   to the centre and v_rot = (y, -x)/R points along rotation (clockwise seen from the north
   Galactic pole, so that it is +y at the Sun). The Sun's velocity is galcen_v_sun =
   (Usun, Theta0 + Vsun, Wsun).
3. astropy transforms that position and velocity to its Galactic frame: heliocentric
   proper motions (pm_l_cosb, pm_b, mas/yr) and radial velocity (km/s). astropy subtracts
   the Sun's velocity and converts km/s at distance d to mas/yr with its own units (au and
   Julian year), independently of the code under test.
4. Equatorial coordinates two ways:
   - "hip": the Galactic position and velocity (Cartesian, with differentials) rotated to
     the equator by the Hipparcos matrix built with astropy's rotation_matrix from the pole
     (192.85948, 27.12825) deg and the NCP longitude 122.93192 deg, then expressed in
     spherical coordinates with astropy's SphericalCosLatDifferential. This is the
     definition the code follows (the Hipparcos matrix applied to ICRS).
   - "icrs": astropy's own SkyCoord transform Galactic -> ICRS, whose Galactic frame is
     tied to FK5 J2000; it includes the ICRS-FK5 frame bias, about 26 mas here.
5. The LSR line-of-sight velocity: the ICRS coordinate with its velocity transformed to
   astropy.coordinates.LSR with v_bary set to the standard solar motion that astropy itself
   gives for 20 km/s toward FK4 (ra 18h, dec +30 deg, equinox B1900), in Galactic Cartesian
   components. astropy's LSR frame adds v_bary to the velocity, so its radial_velocity is
   v_helio + v_bary . n.
"""

import csv
import json
import os

import astropy
import astropy.units as u
import erfa
import numpy as np
import scipy
from astropy.coordinates import (FK4, FK5, ICRS, LSR, CartesianDifferential,
                                 CartesianRepresentation, Galactic,
                                 Galactocentric, SkyCoord,
                                 SphericalCosLatDifferential,
                                 SphericalRepresentation)
from astropy.coordinates.matrix_utilities import rotation_matrix
from astropy.time import Time
from scipy.interpolate import PchipInterpolator

HERE = os.path.dirname(os.path.abspath(__file__))
RNG = np.random.default_rng(20240611)
N_SOURCES = 200
R_CORE = 2.0
NODE_RADII = [3.0, 5.0, 7.0, 9.0, 11.0, 13.0, 15.0]

# ---------------------------------------------------------------- standard solar motion
apex = SkyCoord(FK4(ra=270.0 * u.deg, dec=30.0 * u.deg, equinox="B1900"))
apex_gal = apex.transform_to(Galactic())
v_std = 20.0 * apex_gal.cartesian.xyz.value  # unit vector times 20 km/s
apex_fk5 = SkyCoord(FK5(ra=270.0 * u.deg, dec=30.0 * u.deg, equinox="B1900"))
v_std_fk5 = 20.0 * apex_fk5.transform_to(Galactic()).cartesian.xyz.value

# ---------------------------------------------------------------- precession and epochs
b1900 = Time(1900.0, format="byear", scale="tt")
pmat76_b1900 = erfa.pmat76(b1900.jd1, b1900.jd2)  # J2000 -> B1900, IAU 1976

# ---------------------------------------------------------------- Hipparcos matrix
HIP_RA, HIP_DEC, HIP_LON = 192.85948, 27.12825, 122.93192
M_HIP = (rotation_matrix(180.0 - HIP_LON, "z")
         @ rotation_matrix(90.0 - HIP_DEC, "y")
         @ rotation_matrix(HIP_RA, "z"))  # ICRS -> Galactic
M_HIP_T = M_HIP.T


# ---------------------------------------------------------------- rotation curves
def make_curve(kind, R0, p):
    """Theta(R) in km/s for the model's families, with the solid-body core."""
    if kind == "linear":
        outer = lambda R: p["Theta0"] + p["dTheta_dR"] * (R - R0)
    elif kind == "power":
        outer = lambda R: p["Theta0"] * (R / R0) ** p["alpha"]
    else:
        ip = PchipInterpolator(NODE_RADII, p["nodes"])
        lo, hi = NODE_RADII[0], NODE_RADII[-1]
        outer = lambda R: float(ip(min(max(R, lo), hi)))

    def theta(R):
        if R < R_CORE:
            return outer(R_CORE) * R / R_CORE
        return outer(R)
    return theta


# ---------------------------------------------------------------- sources
rows = []
kinds = ["linear", "power", "nodes"]
for i in range(N_SOURCES):
    kind = kinds[i % 3]
    R0 = RNG.uniform(7.5, 8.8)
    p = {"Theta0": RNG.uniform(200.0, 260.0), "dTheta_dR": 0.0, "alpha": 0.0, "nodes": []}
    if kind == "linear":
        p["dTheta_dR"] = RNG.uniform(-6.0, 6.0)
    elif kind == "power":
        p["alpha"] = RNG.uniform(-0.15, 0.15)
    else:
        p["nodes"] = list(230.0 + RNG.normal(0.0, 15.0, len(NODE_RADII)))
    theta = make_curve(kind, R0, p)
    if kind == "nodes":
        p["Theta0"] = theta(R0)
    Usun, Vsun, Wsun = RNG.uniform(0, 20), RNG.uniform(0, 30), RNG.uniform(0, 15)
    Us, Vs, Ws = RNG.uniform(-15, 15, 3)

    # position: half uniform on the sphere, half near the plane
    lon = RNG.uniform(0.0, 360.0)
    if i % 2 == 0:
        lat = np.degrees(np.arcsin(RNG.uniform(-1.0, 1.0)))
    else:
        lat = RNG.uniform(-5.0, 5.0)
    dist = float(np.exp(RNG.uniform(np.log(0.1), np.log(25.0))))

    gal_pos = SkyCoord(Galactic(l=lon * u.deg, b=lat * u.deg, distance=dist * u.kpc))

    # Galactocentric frame aligned with the Galactic axes
    gc_icrs = SkyCoord(Galactic(l=0 * u.deg, b=0 * u.deg)).icrs
    ngp_icrs = SkyCoord(Galactic(l=0 * u.deg, b=90 * u.deg)).icrs.cartesian.xyz.value
    R1 = rotation_matrix(-gc_icrs.dec, "y") @ rotation_matrix(gc_icrs.ra, "z")
    yp, zp = (R1 @ ngp_icrs)[1], (R1 @ ngp_icrs)[2]
    needed = np.degrees(np.arctan2(-yp, zp))
    roll = Galactocentric.get_roll0().degree - needed
    frame = Galactocentric(galcen_coord=gc_icrs, galcen_distance=R0 * u.kpc,
                           z_sun=0 * u.pc, roll=roll * u.deg,
                           galcen_v_sun=CartesianDifferential(
                               [Usun, p["Theta0"] + Vsun, Wsun] * u.km / u.s))
    # check the alignment: the Galactic unit vectors map onto the frame's axes
    for (ll, bb), want in [((0, 0), (1 - R0, 0, 0)), ((90, 0), (-R0, 1, 0)),
                           ((0, 90), (-R0, 0, 1))]:
        g = SkyCoord(Galactic(l=ll * u.deg, b=bb * u.deg, distance=1 * u.kpc))
        got = g.transform_to(frame).cartesian.xyz.to_value(u.kpc)
        assert np.abs(got - np.array(want)).max() < 1e-12, (got, want)

    gc = gal_pos.transform_to(frame)
    x, y, z = gc.cartesian.xyz.to_value(u.kpc)
    R = float(np.hypot(x, y))
    beta = float(np.degrees(np.arctan2(y, -x)))
    th = theta(R)
    vrot = np.array([y, -x, 0.0]) / R
    uin = np.array([-x, -y, 0.0]) / R
    vsrc = (th + Vs) * vrot + Us * uin + np.array([0.0, 0.0, Ws])

    src = SkyCoord(Galactocentric(x=x * u.kpc, y=y * u.kpc, z=z * u.kpc,
                                  v_x=vsrc[0] * u.km / u.s, v_y=vsrc[1] * u.km / u.s,
                                  v_z=vsrc[2] * u.km / u.s, **{
                                      k: getattr(frame, k) for k in
                                      ("galcen_coord", "galcen_distance", "z_sun",
                                       "roll", "galcen_v_sun")}))
    g = src.transform_to(Galactic())
    assert abs(g.l.degree - lon) < 1e-9 or abs(abs(g.l.degree - lon) - 360) < 1e-9
    assert abs(g.b.degree - lat) < 1e-9

    # equatorial, Hipparcos convention: rotate the Galactic Cartesian state
    cart = g.data.represent_as(CartesianRepresentation, CartesianDifferential)
    eq = cart.transform(M_HIP_T).represent_as(SphericalRepresentation,
                                               SphericalCosLatDifferential)
    dif = eq.differentials["s"]
    to_pm = lambda q: q.to_value(u.mas / u.yr, equivalencies=u.dimensionless_angles())

    # equatorial, astropy's ICRS
    ic = src.transform_to(ICRS())
    lsr = ic.transform_to(LSR(v_bary=CartesianDifferential(v_std * u.km / u.s)))

    rows.append({
        "id": i, "curve": kind, "R0": R0, "Theta0": p["Theta0"],
        "dTheta_dR": p["dTheta_dR"], "alpha": p["alpha"],
        "node_speeds": ";".join(repr(float(v)) for v in p["nodes"]),
        "Usun": Usun, "Vsun": Vsun, "Wsun": Wsun, "Us": Us, "Vs": Vs, "Ws": Ws,
        "l": lon, "b": lat, "d": dist,
        "R": R, "beta": beta, "theta": th,
        "mu_l": g.pm_l_cosb.to_value(u.mas / u.yr), "mu_b": g.pm_b.to_value(u.mas / u.yr),
        "v_helio": g.radial_velocity.to_value(u.km / u.s),
        "v_lsr": lsr.radial_velocity.to_value(u.km / u.s),
        "ra_hip": eq.lon.degree % 360.0, "dec_hip": eq.lat.degree,
        "mua_hip": to_pm(dif.d_lon_coslat), "mud_hip": to_pm(dif.d_lat),
        "ra_icrs": ic.ra.degree, "dec_icrs": ic.dec.degree,
        "mua_icrs": ic.pm_ra_cosdec.to_value(u.mas / u.yr),
        "mud_icrs": ic.pm_dec.to_value(u.mas / u.yr),
    })

with open(os.path.join(HERE, "frames_sources.csv"), "w", newline="") as f:
    w = csv.DictWriter(f, fieldnames=list(rows[0].keys()), lineterminator="\n")
    w.writeheader()
    for r in rows:
        w.writerow({k: (repr(float(v)) if isinstance(v, (float, np.floating)) else v)
                    for k, v in r.items()})

# ---------------------------------------------------------------- monotone cubic (PCHIP)
pchip_sets = [
    {"name": "rising", "x": [3, 5, 7, 9, 11, 13, 15],
     "y": [150, 190, 215, 228, 234, 236, 237]},
    {"name": "wavy_uneven", "x": [2.5, 4, 4.5, 7, 10, 16],
     "y": [200, 240, 235, 236, 220, 250]},
    {"name": "two_points", "x": [4, 12], "y": [220, 240]},
    {"name": "three_points", "x": [4, 8, 12], "y": [240, 220, 230]},
    {"name": "plateaus", "x": [3, 6, 9, 12], "y": [230, 230, 240, 240]},
    {"name": "rising_uneven", "x": [2.2, 3, 4.5, 8, 9, 14],
     "y": [120, 170, 205, 228, 231, 240]},
    {"name": "steep_turn", "x": [4, 5, 6, 9, 10], "y": [230, 231, 215, 220, 236]},
]
for s in pchip_sets:
    ip = PchipInterpolator(s["x"], s["y"])
    xs = np.unique(np.concatenate([np.linspace(s["x"][0], s["x"][-1], 41), s["x"]]))
    s["at"] = [float(v) for v in xs]
    s["value"] = [float(v) for v in ip(xs)]
    s["slope"] = [float(v) for v in ip(xs, 1)]

ref = {
    "generator": "testdata/frames/gen_frames.py",
    "astropy_version": astropy.__version__,
    "numpy_version": np.__version__,
    "scipy_version": scipy.__version__,
    "pyerfa_version": erfa.__version__,
    "r_core": R_CORE,
    "node_radii": NODE_RADII,
    "v_std_fk4_b1900": [float(v) for v in v_std],
    "v_std_fk5_b1900": [float(v) for v in v_std_fk5],
    "b1900_jd_tt": float(b1900.jd1 + b1900.jd2),
    "pmat76_j2000_to_b1900": pmat76_b1900.tolist(),
    "hipparcos_icrs_to_galactic": M_HIP.tolist(),
    "pchip": pchip_sets,
}
with open(os.path.join(HERE, "frames_reference.json"), "w") as f:
    json.dump(ref, f, indent=1)
    f.write("\n")
print("wrote", len(rows), "sources; v_std =", v_std)
