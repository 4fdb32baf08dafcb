// Package model holds the physics of mirabilis: reference frames and constants, the
// Galaxy's rotation and the motions of the Sun and the sources, the spiral arms and the
// field, the likelihood of a catalog of parallax sources with each distance integrated out,
// and the posterior. This comment states the model; the other packages' comments refer to
// its sections (Frames, Kinematics, Arms, Likelihood, Quadrature, Parameters) by name.
//
// # Frames
//
// Quantities at the package's edges are in kpc, km/s, mas, mas/yr and degrees; the maths
// inside uses radians. Positions are ICRS (α, δ) or Galactic (l, b), related by the rotation
// of the Hipparcos catalogue (ESA 1997, vol. 1, §1.5.3; ICRSToGalacticMatrix). Heliocentric
// Galactic Cartesian axes have x toward the Galactic centre (l = 0, b = 0), y toward l = 90°
// (the direction of rotation at the Sun) and z toward the north Galactic pole; a source at
// distance d lies at P = d (cos b cos l, cos b sin l, sin b). The Sun lies in the plane at
// distance R0 from the centre. A point's cylindrical radius is R = √((R0 − Px)² + Py²) and
// its Galactocentric azimuth β = atan2(Py, R0 − Px), 0 at the Sun and growing with
// rotation; at the point, û = (cos β, −sin β, 0) points to the centre, v̂ = (sin β, cos β, 0)
// along rotation and ẑ up.
//
// Proper motions convert to velocities with k = 4.740470463533 km/s per kpc·mas/yr, one
// astronomical unit (IAU 2012) per Julian year. Line-of-sight velocities are heliocentric or
// in the radio local standard of rest (LSR), defined by the standard solar motion of 20 km/s
// toward α = 18h, δ = +30° (B1900), StandardSolarMotion. Proper motions come as
// (μα*, μδ) = (μα cos δ, μδ) or (μl*, μb) = (μl cos b, μb).
//
// # Kinematics
//
// The circular speed Θ(R) (km/s) follows one family of curves: linear, Θ0 + (dΘ/dR)(R − R0);
// power, Θ0 (R/R0)^α; or nodes, free speeds Θ_j at chosen radii R_j joined by a monotone
// cubic or by straight lines and flat beyond the first and last node, with Θ0 = Θ(R0) then
// derived. Every curve rises as a solid body inside the core radius R_core (default
// DefaultCoreRadius, 2 kpc), Θ(R) = Θ(R_core) R/R_core, so that rotation vanishes at the centre and
// a line of sight grazing the centre keeps a smooth velocity field.
//
// A source moves with V_src = (Θ(R) + Vs) v̂ + Us û + Ws ẑ, the sources' mean peculiar motion
// (Us, Vs, Ws) added to circular rotation; the Sun with V⊙ = (U⊙, Θ0 + V⊙, W⊙). With the
// relative velocity Δv = V_src − V⊙ and the unit vectors n̂ = (cos b cos l, cos b sin l,
// sin b), l̂ = (−sin l, cos l, 0) and b̂ = (−sin b cos l, −sin b sin l, cos b),
//
//	v_helio = Δv·n̂,   μl* = Δv·l̂ / (k d),   μb = Δv·b̂ / (k d),   v_LSR = v_helio + V_std·n̂,
//
// V_std the standard solar motion; equatorial proper motions follow by the rotation between
// Galactic and equatorial north at the source. Each source scatters about its mean motion
// with the one-dimensional dispersion σ(R), σ²(R) = σ²_vir + σ²_bar S((R_inner − R)/s_bar), S
// the logistic function (BarScatter; by default R_inner = 4 kpc, σ_bar = 40 km/s and
// s_bar = 0.5 kpc): inside R_inner a bar stirs the motions, and sources whose distance
// lies mostly inside it are flagged and may be left out of the fit. The scatter
// adds in quadrature to the measurement errors: σ²_v + σ²(R) for a velocity and
// σ²_μ + (σ(R)/(k d))² for a proper motion.
//
// A Motion combines R0, a RotationCurve (LinearCurve, PowerCurve or NodesCurve), the Sun's
// peculiar motion and the sources' mean peculiar motion. Its Predict method gives a source's
// observables at a trial distance along a Sightline, the per-source geometry computed once;
// it is the inner loop of the likelihood and does not allocate. PeculiarMotion inverts it
// for a measured source, and KinematicDistances finds the distances at which a
// line-of-sight velocity fits the rotation.
//
// # Arms
//
// Arm k is a log-periodic spiral, ln R_k(β) = ln R_ref − ∫ from β_ref to β of tan ψ(β′) dβ′,
// with pitch angle ψ, or ψ1 below a kink azimuth β_kink and ψ2 from it on; β_ref and the
// azimuth range [β_start, β_end] where the arm exists are settings, and the range may exceed
// 360° so that several windings β_n = β + 2πn cross one line of sight. A point at (R, β) lies
// δ⊥ = (R − R_k(β_n)) cos ψ(β_n) across winding n, and the arm's Gaussian width grows with
// radius, w(R) = max(w + g (R − R0), 0.01 kpc), g the shared width slope. The arm's density
// in the plane,
//
//	ρ_k(R, β) = Σ_n E(β_n) N(δ⊥,n; 0, w(R)) cos ψ(β_n) / (Z R),
//
// fades at the arm's ends through E(β) = S((β − β_start)/τ) S((β_end − β)/τ), τ the end
// softening (default 3° of azimuth), normalised by Z = Δβ / (1 − exp(−Δβ/τ)), Δβ = β_end − β_start. It counts the
// windings within 30τ of the range, and at least the nearest one, so that no point has zero
// density; it integrates to one over the plane up to the width's growth (1.0004 for
// g = 0.02), and it is computed in logarithms, so that a point far from every arm gets a very
// negative log-density rather than −Inf. Sources on no arm belong to the field, an
// exponential disk ρ_0(R) = exp(−R/h)/(2π h²) of scale length h (default 3 kpc). Package arms computes
// these densities.
//
// # Likelihood
//
// Each source's distance is integrated out rather than sampled, so the sampler's dimension
// does not grow with the catalog. With u = ln d over [d_min, d_max] (default [0.05, 30] kpc)
// and membership fractions
// f_m of the field (m = 0) and the arms,
//
//	L_i = Σ_m f_m ∫ N(ϖ_i; 1/d, σ_ϖ) (d cos b)² ρ_m(R(d), β(d)) K_i(d) du,
//
// (d cos b)² the Jacobian of the projected density in ln d, and K_i the product of the
// kinematic terms the source has: one per proper-motion component, in the frame the catalog
// gives them in, and one for the line-of-sight velocity, each a residual with its effective
// uncertainty under the error model (ErrorModel: Gaussian by default, Student's t, or the
// tolerant form of Sivia & Skilling 2006, §8.3). The mixture is the default distance prior
// (the galaxy mode). A source tied to arm k by its label keeps only that
// term, with its fraction. In the parallax mode (Spec.Galaxy false) the density is replaced
// by a prior uniform in d over [d_min, d_max], for fits of the rotation alone. Sums over
// nodes and memberships are taken in logarithms.
//
// # Quadrature
//
// The integrand can be far narrower than the parallax suggests: proper motions act as a
// kinematic distance, and arm crossings are a few hundred parsecs wide. Each source's nodes
// are therefore laid out once, before sampling, and then held fixed: the range is ±5σ in
// parallax clipped to the distance bounds (from the bounds for a parallax below 5σ); it is
// split at arm crossings, at the distances where the predicted motions match the observed
// ones, and at the parallax peak, found at a few pilot parameter sets (the start, the
// maximum a posteriori point and draws around it); the panels are refined by Gauss–Kronrod
// 7/15-point error estimates until the source's error is below the tolerance in ln L_i
// (default 1e-4),
// panels where the integrand is negligible at every pilot are dropped, and neighbours are
// merged where that costs at most a tenth of the tolerance. Package quad builds the panels;
// the layout is saved with each checkpoint so that a resumed run uses the same nodes.
// Checked against adaptive quadrature over the whole distance range, every source is within
// 1e-4 in ln L_i at the pilots, and at parameter sets one posterior spread away at most one
// source-evaluation in 200 is off by more than 1e-3 and none by more than 1e-2.
//
// # Parameters
//
// The parameters are R0, the rotation curve's, the Sun's and the sources' motions, σ_vir,
// the width slope g, each arm's R_ref, ψ (or ψ1, ψ2, β_kink) and w, and the membership
// fractions, which have a symmetric Dirichlet prior (concentration 1 by default, flat on
// the simplex) and are sampled through an
// unconstrained transform with its Jacobian (package prior). Every other parameter is fixed
// or has a prior of its own; derived quantities may carry priors too. Derived quantities
// are the Sun's angular speed Ω⊙ = (Θ0 + V⊙)/R0, Θ0/R0, Θ0 + V⊙, the Oort constants
// A = ½(Θ0/R0 − dΘ/dR) and B = −½(Θ0/R0 + dΘ/dR) at R0, Θ0 for the nodes curve, and the
// radius at which each arm crosses the Sun–centre line (Derived). Package param holds the
// names, units and kinds of them all, as written in parameter files, chain columns and
// summaries (R0, Theta0, dTheta_dR, alpha, Theta_1…, Usun, Vsun, Wsun, Us, Vs, Ws …);
// MotionFromParams builds a Motion from such values, Spec.NewParams a full parameter set.
package model
