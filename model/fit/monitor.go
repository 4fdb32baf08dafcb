package fit

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"github.com/mirabilis-astro/mirabilis/model"
)

// monitorSources is how many sources the quadrature monitor checks at each checkpoint.
const monitorSources = 64

// monitorWalkers is how many walkers' parameter sets the monitor checks them at.
const monitorWalkers = 4

// totalLimit is the error of the whole catalog's ln L (natural log units) above which the
// monitor warns even when no single source exceeds the tolerance: well below the
// posterior's own spread in ln L, which is of order one per parameter.
const totalLimit = 0.05

// quadCheck is what the quadrature monitor measured at one checkpoint.
type quadCheck struct {
	// Sample lists the sources checked, Params the walkers' parameter sets they were
	// checked at.
	Sample []int
	Params []*model.Params
	// Err is the largest |error| of ln L_i over the walkers, by source of Sample.
	Err map[int]float64
	// Total is the largest over the walkers of |Σ error| over the sample, scaled by the
	// number of sources in the fit over the number checked: the error of the whole
	// catalog's ln L, estimated from the sample (exact when every source was checked).
	Total float64
}

// checkQuadrature measures the quadrature error of a sample of sources at a few walkers'
// positions: the difference between ln L_i on the fixed panels and on panels refined
// there (model.Likelihood.QuadratureErrors). The sample and the walkers depend on the
// step only, so a resumed run checks what the uninterrupted run would have.
func (j *Job) checkQuadrature(step, every int, positions [][]float64) (*quadCheck, error) {
	L := j.Like
	var fitted []int
	for i := range L.Sources {
		if !L.Excluded[i] {
			fitted = append(fitted, i)
		}
	}
	c := &quadCheck{Err: map[int]float64{}}
	n := len(fitted)
	if n == 0 || len(positions) == 0 {
		return c, nil
	}
	stride := max(1, n/monitorSources)
	for k := (step * 7919) % stride; k < n && len(c.Sample) < monitorSources; k += stride {
		c.Sample = append(c.Sample, fitted[k])
	}
	w := len(positions)
	for m := range min(monitorWalkers, w) {
		p, err := j.Post.Params(positions[(step/max(1, every)+m*w/monitorWalkers)%w])
		if err != nil {
			continue
		}
		c.Params = append(c.Params, p)
		d, err := L.QuadratureErrors(p, c.Sample)
		if err != nil {
			return nil, err
		}
		var sum float64
		for k, i := range c.Sample {
			c.Err[i] = max(c.Err[i], math.Abs(d[k]))
			sum += d[k]
		}
		c.Total = max(c.Total, math.Abs(sum)*float64(n)/float64(len(c.Sample)))
	}
	return c, nil
}

// over returns the sources whose error exceeds tol, largest first.
func (c *quadCheck) over(tol float64) []int {
	var out []int
	for _, i := range c.Sample {
		if c.Err[i] > tol {
			out = append(out, i)
		}
	}
	sort.SliceStable(out, func(a, b int) bool { return c.Err[out[a]] > c.Err[out[b]] })
	return out
}

// report returns the monitor's warning, or "" when every source checked is within tol
// and the whole catalog's ln L within totalLimit. action says what becomes of the panels.
func (c *quadCheck) report(step int, tol float64, names func(int) string, action string) string {
	bad := c.over(tol)
	if len(bad) == 0 && !(c.Total > totalLimit) {
		return ""
	}
	var list []string
	for k, i := range bad {
		if k == 5 {
			list = append(list, fmt.Sprintf("and %d more", len(bad)-5))
			break
		}
		list = append(list, fmt.Sprintf("%s (%.1e)", names(i), c.Err[i]))
	}
	what := fmt.Sprintf("quadrature error of ln L_i above %.0e for %d of %d sources checked at %d walkers",
		tol, len(bad), len(c.Sample), len(c.Params))
	if len(bad) > 0 {
		what += ": " + strings.Join(list, ", ")
	}
	return fmt.Sprintf("step %d: %s; whole catalog's ln L off by about %.1e; panels %s", step, what, c.Total, action)
}
