package mcmc

import (
	"errors"
	"fmt"
	"math"

	"gonum.org/v1/gonum/optimize"
)

// MAPSettings controls FindMAP. The zero value is usable.
type MAPSettings struct {
	// Scale gives each parameter's typical scale (in its own units): the
	// search runs in coordinates (x − x0)/Scale so that parameters of very
	// different sizes are treated alike. Nil means 1 for every parameter;
	// entries must be positive.
	Scale []float64
	// Simplex is the size of the initial Nelder–Mead simplex in units of
	// Scale. Zero means 0.5.
	Simplex float64
	// MaxEvaluations bounds the number of log-density evaluations over all
	// restarts. Zero means 2000·(n+1) for n parameters.
	MaxEvaluations int
	// Restarts is the largest number of times the search is started afresh
	// from the best point found, with a new simplex, which guards against the
	// simplex collapsing before the maximum is reached. Restarts stop once
	// one gains less than Settle. Zero means 2; a negative value means none.
	Restarts int
	// Settle is the gain in log-density below which a restart counts as
	// having found nothing more: the search has then settled. Zero means
	// 0.01, negligible beside a posterior's width of about n/2 in
	// log-density for n parameters.
	Settle float64
	// Tolerance is the change in log-density below which a search is
	// considered converged (absolute, in log-density units). Zero means 1e-9.
	Tolerance float64
}

// MAPResult is the outcome of FindMAP.
type MAPResult struct {
	// X is the point of highest log-density found.
	X []float64
	// LogDensity is the log-density at X.
	LogDensity float64
	// Evaluations is the number of log-density evaluations used.
	Evaluations int
	// Converged is true when a search from the best point found (a restart,
	// or the first search when it starts there) gained less than Settle: the
	// value has stopped improving. It is false when
	// the budget or the restarts ran out first.
	Converged bool
	// Rounds is the number of searches run (the first and its restarts), and
	// LastGain the log-density the last of them gained.
	Rounds   int
	LastGain float64
}

// FindMAP searches for the maximum of a log-density, starting from x0, with
// the Nelder–Mead simplex method (Nelder & Mead 1965, Comput. J. 7, 308; the
// implementation of gonum's optimize package). The log-density must be
// finite at x0; −Inf elsewhere marks points outside the support, which the
// search avoids. A NaN log-density, +Inf or a panic is an error naming the
// position.
// The result is deterministic.
func FindMAP(logDensity func(x []float64) float64, x0 []float64, s *MAPSettings) (*MAPResult, error) {
	if s == nil {
		s = &MAPSettings{}
	}
	n := len(x0)
	if n == 0 {
		return nil, errors.New("finding the MAP: no parameters")
	}
	if logDensity == nil {
		return nil, errors.New("finding the MAP: no log-density")
	}
	scale := s.Scale
	if scale == nil {
		scale = make([]float64, n)
		for i := range scale {
			scale[i] = 1
		}
	}
	if len(scale) != n {
		return nil, fmt.Errorf("finding the MAP: %d scales for %d parameters", len(scale), n)
	}
	for i, v := range scale {
		if !(v > 0) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("finding the MAP: scale of parameter %d is %v, want a finite positive value", i, v)
		}
	}
	simplex := s.Simplex
	if simplex == 0 {
		simplex = 0.5
	}
	if !(simplex > 0) {
		return nil, fmt.Errorf("finding the MAP: simplex size %v, want a positive value", simplex)
	}
	budget := s.MaxEvaluations
	if budget == 0 {
		budget = 2000 * (n + 1)
	}
	restarts := s.Restarts
	if restarts == 0 {
		restarts = 2
	}
	if restarts < 0 {
		restarts = 0
	}
	tol := s.Tolerance
	if tol == 0 {
		tol = 1e-9
	}
	settle := s.Settle
	if settle == 0 {
		settle = 0.01
	}

	centre := append([]float64(nil), x0...)
	x := make([]float64, n)
	toX := func(u []float64) []float64 {
		for i := range x {
			x[i] = centre[i] + scale[i]*u[i]
		}
		return x
	}
	var badErr error
	evals := 0
	safe := func(x []float64) (v float64) {
		defer func() {
			if r := recover(); r != nil {
				v = math.NaN()
			}
		}()
		return logDensity(x)
	}
	f := func(u []float64) float64 {
		evals++
		v := safe(toX(u))
		if math.IsNaN(v) || math.IsInf(v, 1) {
			if badErr == nil {
				badErr = fmt.Errorf("finding the MAP: log-density is %v at %v", v, append([]float64(nil), x...))
			}
			return math.Inf(1)
		}
		return -v
	}

	best := safe(centre)
	evals++
	if math.IsNaN(best) || math.IsInf(best, 0) {
		return nil, fmt.Errorf("finding the MAP: log-density at the starting point %v is %v, want a finite value", x0, best)
	}
	res := &MAPResult{X: append([]float64(nil), centre...), LogDensity: best}
	for round := 0; round <= restarts; round++ {
		left := budget - evals
		if left <= n+1 {
			break
		}
		// Each round starts at the best point so far, in coordinates centred on it.
		copy(centre, res.X)
		method := &optimize.NelderMead{SimplexSize: simplex}
		settings := &optimize.Settings{
			FuncEvaluations: left,
			Converger:       &optimize.FunctionConverge{Absolute: tol, Iterations: 50 * n},
			InitValues:      &optimize.Location{F: -res.LogDensity},
		}
		r, err := optimize.Minimize(optimize.Problem{Func: f}, make([]float64, n), settings, method)
		if badErr != nil {
			return nil, badErr
		}
		if err != nil && r == nil {
			return nil, fmt.Errorf("finding the MAP: %w", err)
		}
		improved := -r.F - res.LogDensity
		if -r.F > res.LogDensity {
			for i := range res.X {
				res.X[i] = centre[i] + scale[i]*r.X[i]
			}
			res.LogDensity = -r.F
		}
		res.Rounds, res.LastGain = round+1, math.Max(improved, 0)
		// A search started afresh, with a new simplex, from a point it cannot improve
		// on by Settle has settled, whether that point came from an earlier round or
		// from the caller (who may be continuing a search that ran out of budget).
		res.Converged = improved <= settle
		if res.Converged {
			break
		}
	}
	res.Evaluations = evals
	return res, nil
}
