package batch

import (
	"fmt"
	"math"
	"slices"
	"sort"
	"strings"

	"gonum.org/v1/gonum/stat"
	"gonum.org/v1/gonum/stat/distuv"

	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// CoverageRow is the calibration of one parameter over a set of mock fits.
type CoverageRow struct {
	Name string `json:"name"`
	// Mocks is the number of mocks in which the parameter was sampled.
	Mocks int `json:"mocks"`
	// In68 and In95 are the shares of mocks whose truth lies inside the central 68% and
	// 95% posterior intervals; Err68 and Err95 their binomial standard errors at the
	// nominal shares, sqrt(p(1−p)/n).
	In68  float64 `json:"in68"`
	Err68 float64 `json:"in68_err"`
	In95  float64 `json:"in95"`
	Err95 float64 `json:"in95_err"`
	// Ranks holds each mock's rank of the truth among RankDraws posterior draws (the
	// number of draws below it, 0 … RankDraws): uniform when the fits are calibrated
	// (Talts et al. 2018, arXiv:1804.06788).
	Ranks []int `json:"ranks"`
	// Histogram counts the ranks in Bins equal bins; ChiSquare and PValue test it
	// against uniform (Pearson's χ² with Bins − 1 degrees of freedom), given only when
	// every bin expects at least 5 mocks, below which the χ² approximation fails
	// (common practice, no source).
	Histogram []int    `json:"histogram"`
	ChiSquare *float64 `json:"chi_square,omitempty"`
	PValue    *float64 `json:"p_value,omitempty"`
}

// Coverage is the calibration of a set of mock fits.
type Coverage struct {
	Runs      []string      `json:"runs"`
	RankDraws int           `json:"rank_draws"`
	Bins      int           `json:"bins"`
	Rows      []CoverageRow `json:"parameters"`
}

// CoverageDraws is the number of posterior draws each mock's intervals are taken from;
// the ranks use every tenth of them, thinned so that they are closer to independent.
const CoverageDraws = 990

// NewCoverage compares each run's posterior (after burn, see fit.Run.Burn) with the truth
// its mock was drawn from (ReadTruth), for every parameter sampled in the runs.
func NewCoverage(runs []*fit.Run, burn int) (*Coverage, error) {
	if len(runs) == 0 {
		return nil, fmt.Errorf("no runs")
	}
	const thin = 10
	cov := &Coverage{RankDraws: CoverageDraws / thin, Bins: 10}
	rows := map[string]*CoverageRow{}
	for _, r := range runs {
		truth, err := ReadTruth(r.Dir)
		if err != nil {
			return nil, err
		}
		cov.Runs = append(cov.Runs, r.Dir)
		draws := r.Draws(CoverageDraws, burn)
		if len(draws) < CoverageDraws {
			return nil, fmt.Errorf("%s: %d posterior draws after burn-in, want %d: the run is too short", r.Dir, len(draws), CoverageDraws)
		}
		for name, t := range truth {
			vals := make([]float64, len(draws))
			for i, d := range draws {
				v, ok := d.Values[name]
				if !ok {
					return nil, fmt.Errorf("%s: parameter %s of the truth is not in the run", r.Dir, name)
				}
				vals[i] = v
			}
			if slices.Min(vals) == slices.Max(vals) {
				continue // fixed in the fit
			}
			row := rows[name]
			if row == nil {
				row = &CoverageRow{Name: name}
				rows[name] = row
			}
			rank := 0
			for i := 0; i < len(vals); i += thin {
				if vals[i] < t {
					rank++
				}
			}
			row.Ranks = append(row.Ranks, rank)
			sort.Float64s(vals)
			q := func(p float64) float64 { return stat.Quantile(p, stat.LinInterp, vals, nil) }
			row.Mocks++
			if t >= q(0.16) && t <= q(0.84) {
				row.In68++
			}
			if t >= q(0.025) && t <= q(0.975) {
				row.In95++
			}
		}
	}
	names := make([]string, 0, len(rows))
	for n := range rows {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		row := rows[n]
		m := float64(row.Mocks)
		row.In68 /= m
		row.In95 /= m
		row.Err68 = math.Sqrt(0.68 * 0.32 / m)
		row.Err95 = math.Sqrt(0.95 * 0.05 / m)
		h, chi, p := rankUniformity(row.Ranks, cov.RankDraws, cov.Bins)
		row.Histogram = h
		if row.Mocks >= 5*cov.Bins {
			row.ChiSquare, row.PValue = &chi, &p
		}
		cov.Rows = append(cov.Rows, *row)
	}
	return cov, nil
}

// rankUniformity bins ranks 0 … L into bins equal bins and returns the counts with
// Pearson's χ² against a uniform distribution and its p-value.
func rankUniformity(ranks []int, L, bins int) ([]int, float64, float64) {
	h := make([]int, bins)
	for _, r := range ranks {
		h[min(bins-1, r*bins/(L+1))]++
	}
	// Each bin holds the same number of the L+1 possible ranks when bins divides L+1.
	exp := float64(len(ranks)) / float64(bins)
	var chi float64
	for _, c := range h {
		d := float64(c) - exp
		chi += d * d / exp
	}
	p := distuv.ChiSquared{K: float64(bins - 1)}.Survival(chi)
	return h, chi, p
}

// Text renders the coverage table.
func (c *Coverage) Text() string {
	var b strings.Builder
	fmt.Fprintf(&b, "Calibration over %d mock fits: the share of mocks whose true value lies inside\n", len(c.Runs))
	fmt.Fprintf(&b, "the central 68%% and 95%% intervals (± the binomial standard error at the nominal\n")
	fmt.Fprintf(&b, "share), and the rank of the truth among %d posterior draws, tested for uniformity\n", c.RankDraws)
	fmt.Fprintf(&b, "in %d bins (Talts et al. 2018).\n\n", c.Bins)
	fmt.Fprintf(&b, "%-18s %5s  %-14s  %-14s  %8s  %6s  %s\n", "parameter", "mocks", "in 68%", "in 95%", "χ² ranks", "p", "rank histogram")
	for _, r := range c.Rows {
		flag := ""
		chi, p := "       –", "     –"
		if r.PValue != nil {
			chi, p = fmt.Sprintf("%8.2f", *r.ChiSquare), fmt.Sprintf("%6.3f", *r.PValue)
		}
		if math.Abs(r.In68-0.68) > 3*r.Err68 || math.Abs(r.In95-0.95) > 3*r.Err95 || r.PValue != nil && *r.PValue < 0.001 {
			flag = "  ← miscalibrated"
		}
		fmt.Fprintf(&b, "%-18s %5d  %.2f ± %.2f    %.2f ± %.2f    %s  %s  %s%s\n",
			r.Name, r.Mocks, r.In68, r.Err68, r.In95, r.Err95, chi, p, sparkline(r.Histogram), flag)
	}
	if len(c.Rows) > 0 && c.Rows[0].PValue == nil {
		fmt.Fprintf(&b, "\nThe χ² test of the ranks needs at least %d mocks (5 expected in every bin).\n", 5*c.Bins)
	}
	b.WriteString("← miscalibrated: a share more than 3 standard errors from 68% or 95%, or ranks with p < 0.001.\n")
	return b.String()
}

// sparkline draws counts as a row of block characters.
func sparkline(h []int) string {
	blocks := []rune("▁▂▃▄▅▆▇█")
	top := slices.Max(h)
	var b strings.Builder
	for _, c := range h {
		i := 0
		if top > 0 {
			i = c * (len(blocks) - 1) / top
		}
		b.WriteRune(blocks[i])
	}
	return b.String()
}
