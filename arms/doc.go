// Package arms describes the spiral arms of the model galaxy: their centre lines, their
// widths, the in-plane density of sources along each arm and of the field disk, where an arm
// crosses a line of sight, and outlines for plotting.
//
// Conventions. Lengths are in kpc and angles in radians throughout the package. Positions in
// the Galactic plane are given either heliocentrically, with x toward the Galactic centre and
// y toward l = 90°, or Galactocentrically by the cylindrical radius R and the azimuth
//
//	β = atan2(y, R0 − x),
//
// which is 0 at the Sun and grows in the direction of Galactic rotation. A point at in-plane
// distance d along longitude l lies at x = d cos l, y = d sin l.
//
// Arm k is a log-periodic (logarithmic) spiral through (R_ref, β_ref),
//
//	ln R_k(β) = ln R_ref − ∫ from β_ref to β of tan ψ_k(β′) dβ′,
//
// with a constant pitch angle ψ_k, or with ψ_1 below a kink azimuth β_kink and ψ_2 from it on.
// A positive pitch angle makes the radius shrink as β grows, that is along the direction of
// rotation (a trailing arm). An arm exists over an azimuth range [β_start, β_end] that may span
// several turns, so a point at azimuth β can lie near several windings β + 2πn of one arm.
//
// The density of sources on arm k is uniform in azimuth along the arm with softened ends and
// Gaussian across it:
//
//	ρ_k(R, β) = Σ_n E_k(β_n) N(δ_n; 0, w_k(R)) cos ψ_k(β_n) / (Z_k R),
//	δ_n = (R − R_k(β_n)) cos ψ_k(β_n),
//	E_k(β) = σ((β − β_start)/τ) σ((β_end − β)/τ),  Z_k = Δβ / (1 − exp(−Δβ/τ)),
//	w_k(R) = max(w_k + g (R − R0), MinWidth),
//
// σ the logistic function, Δβ = β_end − β_start, τ the softening of the ends and g a width
// slope shared by all arms. Each ρ_k integrates to one over the plane when g = 0, and to
// 1 + (g/cos ψ)² to leading order when g ≠ 0. The sum runs over the windings n counted by
// [Arm.Windings]. Sources on no arm follow the field disk ρ_0(R) = exp(−R/h) / (2π h²).
// [Density] evaluates the logarithms of all these densities at once, with every per-arm
// constant computed in advance, for use inside a likelihood.
package arms
