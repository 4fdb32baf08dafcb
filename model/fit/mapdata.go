package fit

import (
	"math"
	"slices"

	"github.com/mirabilis-astro/mirabilis/mcmc"
)

// ArmSpread is the posterior spread of one arm's centre line: at each azimuth Beta (rad,
// over the arm's azimuth range), the 16th and 84th percentiles Lo and Hi of the centre
// line's radius (kpc) over posterior draws.
type ArmSpread struct {
	Name         string
	Beta, Lo, Hi []float64
}

// armSpreadPoints is the number of azimuths an arm's spread is computed at.
const armSpreadPoints = 240

// ArmSpreads returns every arm's centre-line spread over the draws.
func ArmSpreads(job *Job, draws []Draw) []ArmSpread {
	if len(draws) == 0 {
		return nil
	}
	var out []ArmSpread
	r := make([]float64, len(draws))
	for k, a := range draws[0].Params.Layout.Arms {
		s := ArmSpread{Name: a.Name}
		for i := range armSpreadPoints {
			beta := a.BetaStart + (a.BetaEnd-a.BetaStart)*float64(i)/float64(armSpreadPoints-1)
			for d, dr := range draws {
				r[d] = dr.Params.Layout.Arms[k].Radius(beta)
			}
			slices.Sort(r)
			lo, hi := mcmc.Quantile(0.16, r, nil), mcmc.Quantile(0.84, r, nil)
			if math.IsNaN(lo) || math.IsNaN(hi) {
				continue
			}
			s.Beta, s.Lo, s.Hi = append(s.Beta, beta), append(s.Lo, lo), append(s.Hi, hi)
		}
		out = append(out, s)
	}
	return out
}

// MergeRuns returns one Run holding the runs' chains side by side (see Merged), with the
// first run's directory, model and pilot stage; a single run is returned as it is.
func MergeRuns(runs []*Run) (*Run, error) {
	if len(runs) == 1 {
		return runs[0], nil
	}
	c, err := Merged(runs)
	if err != nil {
		return nil, err
	}
	m := *runs[0]
	m.Chain = c
	return &m, nil
}
