// Package model holds the physics of mirabilis: reference frames and constants, the
// Galaxy's rotation and the motions of the Sun and the sources, the likelihood of a catalog
// of parallax sources with each distance integrated out, and the priors.
//
// # Frames and units
//
// Quantities at the package's edges are in kpc, km/s, mas, mas/yr and degrees; the maths
// inside uses radians. Positions are ICRS (α, δ) or Galactic (l, b), related by the rotation
// of the Hipparcos catalogue (ICRSToGalacticMatrix). Heliocentric Galactic Cartesian axes
// have x toward the Galactic centre (l = 0, b = 0), y toward l = 90° (the direction of
// rotation at the Sun) and z toward the north Galactic pole. The Sun lies in the plane at
// distance R0 from the centre; the Galactocentric azimuth β = atan2(Py, R0 − Px) of a point
// P is 0 at the Sun and grows with rotation.
//
// Line-of-sight velocities are heliocentric or in the radio local standard of rest (LSR),
// defined by the standard solar motion (StandardSolarMotion). Proper motions come as
// (μα*, μδ) = (μα cos δ, μδ) or (μl*, μb) = (μl cos b, μb).
//
// # Kinematics
//
// A Motion combines R0, a RotationCurve (LinearCurve, PowerCurve or NodesCurve, each with a
// solid-body core), the Sun's peculiar motion and the sources' mean peculiar motion. Its
// Predict method gives a source's observables at a trial distance along a Sightline, the
// per-source geometry computed once; it is the inner loop of the likelihood and does not
// allocate. PeculiarMotion inverts it for a measured source, and KinematicDistances finds
// the distances at which a line-of-sight velocity fits the rotation.
//
// Parameter values are named as in parameter files and chain columns (R0, Theta0,
// dTheta_dR, alpha, Theta_1…, Usun, Vsun, Wsun, Us, Vs, Ws …); MotionFromParams builds a
// Motion from them.
package model
