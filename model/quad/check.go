package quad

import "math"

// checkShare is the share of Tol to which Check refines its reference layout.
const checkShare = 0.1

// Check measures the error of layout l for a new integrand f, given by its natural log as
// for Build, with breakpoints breaks where f may change sharply: it refines l for f alone
// (Refine, cut at breaks, with the tolerance s.Tol/10) and returns
// diff, the natural log of l's integral of f minus that of the refined layout, with the
// refined layout. Since the refined layout is accurate well within Tol/10 (see Build),
// |diff| is the error of ln I on l to within Tol/10, whatever l's own |K15 − G7| says:
// merged panels, whose estimate overstates their error by orders of magnitude, are judged
// by what they give, and mass that moved into a gap of l is found by Refine's probes.
// s may be nil for the defaults.
func Check(l *Layout, breaks []float64, f func(u float64) float64, s *Settings) (diff float64, refined *Layout, err error) {
	set, err := s.resolved()
	if err != nil {
		return 0, nil, err
	}
	set.Tol *= checkShare
	set.NoMerge = true
	r, _, err := Refine(l, breaks, []func(float64) float64{f}, &set)
	if err != nil {
		return 0, nil, err
	}
	return logIntegralOf(l, f) - logIntegralOf(r, f), r, nil
}

// logIntegralOf returns ln of l's integral of the function whose log is f.
func logIntegralOf(l *Layout, f func(float64) float64) float64 {
	if l.Len() == 0 {
		return math.Inf(-1)
	}
	v := make([]float64, l.Len())
	for i, u := range l.nodes {
		v[i] = f(u)
	}
	return l.LogIntegral(v)
}
