// Package quad lays out the quadrature of a positive, possibly sharply peaked
// function of one variable, given through its natural logarithm: a set of
// panels, each integrated by the 15-point Gauss–Kronrod rule, placed where
// the function has its mass and fixed before use, so that the same nodes can
// then serve many evaluations of a family of similar integrands.
//
// In mirabilis the variable is u = ln d (d the distance in kpc) and the
// integrand is one source's likelihood term; the package itself knows
// nothing of that and works for any variable and integrand.
//
// A layout is built by Build from the logarithm of the integrand at a few
// "pilot" parameter sets:
//
//  1. The range [lo, hi] is cut at the caller's candidate breakpoints and
//     into at least Settings.MinPanels equal panels no wider than
//     Settings.MaxWidth.
//  2. Panels are bisected, the one contributing most first, until at every
//     pilot the estimated relative error Σ|K15 − G7| / I is at most
//     Settings.Tol (Piessens et al. 1983, QUADPACK, Springer, sec. 2.2:
//     |K15 − G7| estimates the error of the 7-point Gauss rule, so using the
//     15-point Kronrod result is conservative). A relative error ε of I is an
//     error ε of ln I. Because a peak narrower than the node gaps can make
//     K15 and G7 agree by chance while both miss it, panels are also bisected
//     until no local maximum of the log-integrand at a node is sharper than
//     the gaps beside it, unless its scale f·gap is below Tol/10 of I (see
//     Layout.Unresolved).
//  3. Panels where the log-integrand stays more than Settings.Depth below its
//     maximum at every pilot (at all 15 nodes and both ends) are deleted, so
//     the layout may have gaps.
//  4. Runs of touching panels are merged into fewer panels while each merged
//     panel's Kronrod value reproduces the sum of the Kronrod values it
//     replaces at every pilot, spending at most Settings.MergeShare × Tol
//     per pilot in total. The merged panel is judged against the resolved
//     panels it replaces, not by its own |K15 − G7|, which overstates the
//     error of a wide panel over a smooth peak by orders of magnitude; so
//     Layout.Estimate of a merged layout may exceed Tol where its integral is
//     accurate. A layout that did not converge is not merged.
//
// When refinement runs out of bisections (Settings.MaxPanels) or reaches
// Settings.MinWidth before every peak is resolved, Build falls back: it
// keeps bisecting on the error estimate alone, for as many bisections again,
// and a layout whose estimate then meets Tol at every pilot is used, merged
// as above, and marked Stats.Fallback. Only a layout whose estimate still
// exceeds Tol is reported as not converged.
//
// The layout then gives the nodes and weights (Layout.Nodes,
// Layout.Weights), the log of the integral from the log-integrand at the
// nodes (Layout.LogIntegral), further refinement for new parameter sets
// (Refine), and with it the error of the layout at a new parameter set
// (Check: the difference from the refined layout), the per-panel error
// estimates (Layout.Estimate, Layout.Unresolved), and a binary form for
// checkpoints (Layout.MarshalBinary).
//
// Peaks and edges that lie at a breakpoint are found whatever their width;
// elsewhere only those that the first panels' nodes can see (see
// Settings.MaxWidth). The caller should therefore pass every feature it
// knows of as a breakpoint.
//
// Every function works in log space with a scale factor, so integrands whose
// logarithm is very negative, or −Inf over part of the range, neither
// underflow nor overflow.
package quad
