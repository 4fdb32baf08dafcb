package fit

import (
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"path/filepath"
	"sort"
	"strconv"
	"strings"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
)

// This file compares models fitted to one catalog by Pareto-smoothed
// importance-sampling leave-one-out cross-validation (Vehtari, Gelman & Gabry
// 2017, Stat. Comput. 27, 1413; Vehtari et al. 2024, JMLR 25, 72): the units
// left out are the catalog's sources, and each model's pointwise
// log-likelihoods ln L_i are evaluated at posterior draws from its run.

// DefaultCompareDraws is the number of posterior draws per model used by
// Compare when CompareOptions.Draws is zero.
const DefaultCompareDraws = 1000

// CompareOptions adjust Compare.
type CompareOptions struct {
	// Draws is the number S of posterior draws per model; 0 means
	// DefaultCompareDraws. Fewer are used when the chain holds fewer draws at
	// least one autocorrelation time apart (see Pointwise.Spacing).
	Draws int
	// Burn is the number of kept rows left out of every chain as burn-in; 0
	// means each configuration's own (see Run.Burn).
	Burn int
	// Threads is the number of goroutines evaluating ln L_i; 0 means GOMAXPROCS.
	Threads int
}

// Pointwise is one model's matrix of pointwise log-likelihoods: LogLik[i][s]
// is ln L_i, the natural log of source i's likelihood (a density in the
// units of the catalog's measurements), at posterior draw s.
type Pointwise struct {
	// Label names the model: its run directory, or the run directories of
	// merged runs joined by "+".
	Label string
	// Runs are the run directories whose chains were merged (one for a single run).
	Runs []string
	// Sources are the names of the sources compared, in catalog order.
	Sources []string
	// LogLik holds ln L_i for every source (first index, aligned with Sources)
	// at every draw (second index).
	LogLik [][]float64
	// Requested is the number of draws asked for.
	Requested int
	// Burn is the number of kept rows left out as burn-in; Rows the number
	// after it; Walkers the walkers of all runs together.
	Burn, Rows, Walkers int
	// Tau is the largest integrated autocorrelation time of the sampled
	// coordinates after burn-in (kept rows; NaN when it cannot be estimated).
	Tau float64
	// Spacing is the smallest number of kept rows between two successive
	// draws of one walker: at least Tau, so that the draws are close to
	// independent and the relative efficiency of importance sampling is
	// taken as 1.
	Spacing int
	// Refused counts draws the model refused (skipped).
	Refused int
}

// Draws returns the number of draws S in the matrix.
func (p *Pointwise) Draws() int {
	if len(p.LogLik) == 0 {
		return 0
	}
	return len(p.LogLik[0])
}

// groupTau returns the largest integrated autocorrelation time, in kept rows,
// over the sampled coordinates of a chain after burn (Sokal's window with
// c = 5, as in the summaries).
func groupTau(c *mcmc.Chain, burn int) float64 {
	tau := math.NaN()
	for j := range c.Dim() {
		t, _ := mcmc.AutocorrTime(c.Series(j, burn), 5)
		if !math.IsNaN(t) && !(t <= tau) {
			tau = t
		}
	}
	return tau
}

// ComputePointwise evaluates ln L_i of every source not left out (include[i]
// false leaves source i out) at posterior draws from runs of one model
// (merged as by Merged when there are several). The draws are spread evenly
// over the kept rows after burn-in, cycling through the walkers, with at most
// Walkers·Rows/⌈τ⌉ of them so that each walker's draws are at least ⌈τ⌉ kept
// rows apart. Each run's draws are evaluated with that run's own quadrature
// layouts, in parallel, each value written to its own slot.
func ComputePointwise(runs []*Run, include []bool, opts CompareOptions) (*Pointwise, error) {
	chain := runs[0].Chain
	if len(runs) > 1 {
		var err error
		if chain, err = Merged(runs); err != nil {
			return nil, err
		}
	}
	first := runs[0]
	burn := first.Burn(opts.Burn)
	burn = max(0, min(burn, chain.Len()-2))
	p := &Pointwise{Requested: opts.Draws, Burn: burn, Rows: chain.Len() - burn, Walkers: chain.Walkers()}
	if p.Requested <= 0 {
		p.Requested = DefaultCompareDraws
	}
	for _, r := range runs {
		p.Runs = append(p.Runs, r.Dir)
	}
	p.Label = strings.Join(p.Runs, "+")
	p.Tau = groupTau(chain, burn)
	spacing := 1
	if !math.IsNaN(p.Tau) {
		spacing = int(math.Ceil(p.Tau))
	}
	n := min(p.Requested, p.Walkers*p.Rows/spacing)
	if n < 2 {
		return nil, fmt.Errorf("%s: the chain after burn-in (%d kept rows of %d walkers, τ = %.1f rows) holds fewer than 2 draws one autocorrelation time apart: run it longer", p.Label, p.Rows, p.Walkers, p.Tau)
	}
	p.Spacing = p.Walkers * p.Rows / n
	// Which run each merged walker comes from.
	owner := make([]*Run, 0, p.Walkers)
	for _, r := range runs {
		for range r.Chain.Walkers() {
			owner = append(owner, r)
		}
	}
	type draw struct {
		run    *Run
		params *model.Params
	}
	draws := make([]draw, 0, n)
	for i := range n {
		k := i % p.Walkers
		x := chain.Position(burn+i*p.Rows/n, k, nil)
		prm, err := owner[k].Job.Post.Params(x)
		if err != nil {
			p.Refused++
			continue
		}
		draws = append(draws, draw{owner[k], prm})
	}
	if len(draws) < 2 {
		return nil, fmt.Errorf("%s: the model refused %d of %d posterior draws", p.Label, p.Refused, n)
	}
	var idx []int
	for i, s := range first.Job.Like.Sources {
		if include[i] {
			idx = append(idx, i)
			p.Sources = append(p.Sources, s.Name)
		}
	}
	p.LogLik = make([][]float64, len(idx))
	for j := range idx {
		p.LogLik[j] = make([]float64, len(draws))
	}
	model.Parallel(len(draws), opts.Threads, func(s int) {
		d := draws[s]
		for j, i := range idx {
			p.LogLik[j][s] = d.run.Job.Like.SourceLogL(i, d.params)
		}
	})
	for j, ll := range p.LogLik {
		for s, v := range ll {
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%s: ln L of source %s is %v at draw %d", p.Label, p.Sources[j], v, s)
			}
		}
	}
	return p, nil
}

// WriteCSV writes the matrix as CSV: '#' comment lines saying what the rows
// are, a header of source names, then one row per draw (S rows, N columns),
// numbers in the shortest form that reads back to the same float64. R's
// loo(as.matrix(read.csv(FILE, comment.char = "#", check.names = FALSE)),
// r_eff = NA) gives the same elpd_loo as Compare.
func (p *Pointwise) WriteCSV(w io.Writer) error {
	fmt.Fprintf(w, "# ln L_i (natural log) of each source (column) at %d posterior draws (rows) of %s\n", p.Draws(), p.Label)
	fmt.Fprintf(w, "# draw i is walker i mod %d at kept row %d + floor(i*%d/%d) of the chain (rows counted from 0); one walker's draws are >= %d rows apart, tau = %.1f rows\n",
		p.Walkers, p.Burn, p.Rows, p.Draws()+p.Refused, p.Spacing, p.Tau)
	fmt.Fprintf(w, "# relative efficiency taken as 1 (r_eff = NA in R loo)\n")
	cw := csv.NewWriter(w)
	if err := cw.Write(p.Sources); err != nil {
		return err
	}
	row := make([]string, len(p.Sources))
	for s := range p.Draws() {
		for j := range p.Sources {
			row[j] = strconv.FormatFloat(p.LogLik[j][s], 'g', -1, 64)
		}
		if err := cw.Write(row); err != nil {
			return err
		}
	}
	cw.Flush()
	return cw.Error()
}

// ModelResult is one model's leave-one-out estimate in a Comparison.
type ModelResult struct {
	// Label names the model (see Pointwise.Label).
	Label string `json:"model"`
	// Runs are its run directories.
	Runs []string `json:"runs"`
	// Draws is the number of posterior draws used, Requested the number
	// asked for; Spacing the smallest kept-row distance between one walker's
	// draws, Tau the autocorrelation time in kept rows.
	Draws     int     `json:"draws"`
	Requested int     `json:"draws_requested"`
	Spacing   int     `json:"draw_spacing_rows"`
	Tau       float64 `json:"tau_rows"`
	// ELPD, P and IC are elpd_loo, p_loo and looic with their standard errors.
	ELPD mcmc.Estimate `json:"elpd_loo"`
	P    mcmc.Estimate `json:"p_loo"`
	IC   mcmc.Estimate `json:"looic"`
	// WAIC is elpd_waic, p_waic and waic (less reliable than LOO).
	WAICELPD mcmc.Estimate `json:"elpd_waic"`
	WAICP    mcmc.Estimate `json:"p_waic"`
	WAIC     mcmc.Estimate `json:"waic"`
	// Diff is elpd_loo of this model minus that of the best, with the
	// standard error of the paired difference (zero for the best).
	Diff mcmc.Estimate `json:"elpd_diff"`
	// KThreshold is the Pareto k̂ above which a source's estimate is
	// unreliable (mcmc.ParetoKThreshold of Draws); HighK lists those sources.
	KThreshold float64    `json:"pareto_k_threshold"`
	HighK      []HighK    `json:"high_pareto_k"`
	Pointwise  *Pointwise `json:"-"`
	loo        *mcmc.LOO
}

// HighK is a source whose Pareto k̂ exceeds the threshold.
type HighK struct {
	Source string  `json:"source"`
	K      float64 `json:"pareto_k"`
}

// SourceComparison is one source's share of every model's elpd_loo.
type SourceComparison struct {
	Name string `json:"name"`
	// ELPD, K and Diff are aligned with Comparison.Models: the source's
	// elpd_loo, its Pareto k̂, and its elpd_loo minus the best model's.
	ELPD []float64 `json:"elpd_loo"`
	K    []float64 `json:"pareto_k"`
	Diff []float64 `json:"elpd_diff"`
}

// Comparison ranks models fitted to one catalog by elpd_loo.
type Comparison struct {
	// Catalog and CatalogSHA256 identify the catalog all models fit.
	Catalog       string `json:"catalog"`
	CatalogSHA256 string `json:"catalog_sha256"`
	// LeftOut are sources excluded from at least one run, left out of all.
	LeftOut []string `json:"left_out"`
	// Models, best first (largest elpd_loo).
	Models []*ModelResult `json:"models"`
	// Sources, in catalog order, with their pointwise values.
	Sources []SourceComparison `json:"sources"`
	// Note says how the draws were taken.
	Note string `json:"note"`
}

// GroupRuns groups runs that fit the same model (SameModel) in the order of
// their first appearance: each group is one model, its runs to be merged.
func GroupRuns(runs []*Run) [][]*Run {
	var groups [][]*Run
outer:
	for _, r := range runs {
		for g, grp := range groups {
			if SameModel([]*Run{grp[0], r}) == nil {
				groups[g] = append(grp, r)
				continue outer
			}
		}
		groups = append(groups, []*Run{r})
	}
	return groups
}

// CheckComparable checks that models may be compared by elpd: they fit the
// same catalog (by SHA-256; the error names the sources that differ), their
// ln L_i are densities of the same data (the same distance mode: with
// distance_prior = "galaxy" the likelihood is a density of the positions as
// well, with "parallax" it is not; the same vertical mode: with vertical =
// "gaussian" it is a density of the latitudes too; and the same selection, over
// whose share of the Galaxy each source's density is normalised), and every
// source is tied to an arm in all of them or in none (MODEL.md §10).
func CheckComparable(models [][]*Run) error {
	a := models[0][0]
	for _, grp := range models[1:] {
		b := grp[0]
		if a.Manifest.CatalogSHA256 != b.Manifest.CatalogSHA256 {
			return fmt.Errorf("runs %s and %s fit different catalogs (%s, SHA-256 %.12s…; %s, SHA-256 %.12s…): %s; models can only be compared on the same data",
				a.Dir, b.Dir, a.Job.Config.Catalog, a.Manifest.CatalogSHA256, b.Job.Config.Catalog, b.Manifest.CatalogSHA256,
				catalogDifference(a.Job.Catalog, b.Job.Catalog))
		}
		da, db := a.Job.Config.Likelihood.DistancePrior, b.Job.Config.Likelihood.DistancePrior
		if da != db {
			return fmt.Errorf("runs %s and %s use different distance modes (distance_prior = %q and %q): with \"galaxy\" each source's likelihood is a density of its position as well as its measurements, with \"parallax\" it is not, so their elpd are not on one scale",
				a.Dir, b.Dir, da, db)
		}
		va, vb := a.Job.Config.Likelihood.Vertical, b.Job.Config.Likelihood.Vertical
		if va != vb {
			return fmt.Errorf("runs %s and %s use different vertical modes (vertical = %q and %q): with \"gaussian\" each source's likelihood is a density of its latitude as well, with \"none\" it is not, so their elpd are not on one scale",
				a.Dir, b.Dir, va, vb)
		}
		if sa, sb := selectionText(a.Job.Config.Selection), selectionText(b.Job.Config.Selection); sa != sb {
			return fmt.Errorf("runs %s and %s assume different survey selections (%s; %s): each source's likelihood is a density over what its survey could find, so under different selections their elpd are not on one scale",
				a.Dir, b.Dir, sa, sb)
		}
		var bad []string
		for i, s := range a.Job.Like.Sources {
			la, lb := s.Label != 0, b.Job.Like.Sources[i].Label != 0
			if la != lb {
				in, out := a, b
				if lb {
					in, out = b, a
				}
				bad = append(bad, fmt.Sprintf("%s (tied to an arm in %s, free in %s)", s.Name, in.Dir, out.Dir))
			}
		}
		if len(bad) > 0 {
			return fmt.Errorf("runs %s and %s treat %d source(s) differently: %s; a source tied to an arm in one model and free in the other makes their likelihoods densities of different things",
				a.Dir, b.Dir, len(bad), strings.Join(bad, ", "))
		}
	}
	return nil
}

// selectionText describes a survey's selection in the terms of the [selection] table, or
// says there is none; equal selections give equal text.
func selectionText(s config.Selection) string {
	if !s.Active() {
		return "no selection"
	}
	var parts []string
	if s.Declination != nil {
		parts = append(parts, fmt.Sprintf("declination = %v", s.Declination))
	}
	if len(s.ExcludeLongitude) > 0 {
		parts = append(parts, fmt.Sprintf("exclude_longitude = %v", s.ExcludeLongitude))
	}
	if s.HalfDistance != 0 {
		parts = append(parts, fmt.Sprintf("completeness = { half_distance = %g, softness = %g }", s.HalfDistance, s.Softness))
	}
	return strings.Join(parts, ", ")
}

// catalogDifference describes how two catalogs differ, by source.
func catalogDifference(a, b *catalog.Catalog) string {
	byName := func(c *catalog.Catalog) map[string]catalog.Source {
		m := map[string]catalog.Source{}
		for _, s := range c.Sources {
			m[s.Name] = s
		}
		return m
	}
	ma, mb := byName(a), byName(b)
	var onlyA, onlyB, changed []string
	for _, s := range a.Sources {
		t, ok := mb[s.Name]
		if !ok {
			onlyA = append(onlyA, s.Name)
			continue
		}
		// Compared as printed, so that missing values (NaN) compare equal.
		s.Line, t.Line = 0, 0
		if fmt.Sprintf("%+v", s) != fmt.Sprintf("%+v", t) {
			changed = append(changed, s.Name)
		}
	}
	for _, s := range b.Sources {
		if _, ok := ma[s.Name]; !ok {
			onlyB = append(onlyB, s.Name)
		}
	}
	var parts []string
	list := func(what string, names []string) {
		if len(names) == 0 {
			return
		}
		shown := names[:min(5, len(names))]
		more := ""
		if len(names) > len(shown) {
			more = fmt.Sprintf(" and %d more", len(names)-len(shown))
		}
		parts = append(parts, fmt.Sprintf("%d source(s) %s: %s%s", len(names), what, strings.Join(shown, ", "), more))
	}
	list("only in "+a.Path, onlyA)
	list("only in "+b.Path, onlyB)
	list("with different values", changed)
	if len(parts) == 0 {
		return "the files differ but not in their sources (column order, units or comments)"
	}
	return strings.Join(parts, "; ")
}

// Compare computes PSIS-LOO and WAIC for each model (a group of runs of one
// configuration, see GroupRuns) over the same sources, ranks the models by
// elpd_loo and gives each one's difference from the best with the standard
// error of the paired difference over sources. Sources excluded from any run
// are left out of all models. The relative efficiency of the draws is taken
// as 1, the draws being at least one autocorrelation time apart.
func Compare(models [][]*Run, opts CompareOptions) (*Comparison, error) {
	if len(models) < 2 {
		return nil, fmt.Errorf("comparing needs at least two models; the runs given fit %d", len(models))
	}
	if err := CheckComparable(models); err != nil {
		return nil, err
	}
	first := models[0][0]
	n := len(first.Job.Like.Sources)
	include := make([]bool, n)
	for i := range include {
		include[i] = true
	}
	cmp := &Comparison{Catalog: first.Job.Config.Catalog, CatalogSHA256: first.Manifest.CatalogSHA256}
	for _, grp := range models {
		for _, r := range grp {
			for i, ex := range r.Job.Like.Excluded {
				if ex && include[i] {
					include[i] = false
					cmp.LeftOut = append(cmp.LeftOut, first.Job.Like.Sources[i].Name)
				}
			}
		}
	}
	sort.Strings(cmp.LeftOut)
	for _, grp := range models {
		pw, err := ComputePointwise(grp, include, opts)
		if err != nil {
			return nil, err
		}
		loo, err := mcmc.PSISLOO(pw.LogLik, 1)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", pw.Label, err)
		}
		waic, err := mcmc.ComputeWAIC(pw.LogLik)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", pw.Label, err)
		}
		m := &ModelResult{Label: pw.Label, Runs: pw.Runs, Draws: pw.Draws(), Requested: pw.Requested,
			Spacing: pw.Spacing, Tau: pw.Tau, ELPD: loo.ELPD, P: loo.P, IC: loo.IC,
			WAICELPD: waic.ELPD, WAICP: waic.P, WAIC: waic.IC, KThreshold: loo.KThreshold,
			Pointwise: pw, loo: loo}
		for i, pt := range loo.Pointwise {
			if pt.K > loo.KThreshold {
				m.HighK = append(m.HighK, HighK{pw.Sources[i], pt.K})
			}
		}
		cmp.Models = append(cmp.Models, m)
	}
	// Best first; ties keep the order given.
	sort.SliceStable(cmp.Models, func(i, j int) bool { return cmp.Models[i].ELPD.Value > cmp.Models[j].ELPD.Value })
	best := pointwiseELPD(cmp.Models[0].loo)
	for _, m := range cmp.Models[1:] {
		d, err := mcmc.PairedDifference(pointwiseELPD(m.loo), best)
		if err != nil {
			return nil, err
		}
		m.Diff = d
	}
	for i, name := range cmp.Models[0].Pointwise.Sources {
		sc := SourceComparison{Name: name}
		for _, m := range cmp.Models {
			pt := m.loo.Pointwise[i]
			sc.ELPD = append(sc.ELPD, pt.ELPD)
			sc.K = append(sc.K, pt.K)
			sc.Diff = append(sc.Diff, pt.ELPD-best[i])
		}
		cmp.Sources = append(cmp.Sources, sc)
	}
	cmp.Note = "Draws spread evenly over each chain after burn-in, each walker's draws at least one autocorrelation time apart, so the relative efficiency of importance sampling is taken as 1."
	return cmp, nil
}

func pointwiseELPD(l *mcmc.LOO) []float64 {
	out := make([]float64, len(l.Pointwise))
	for i, p := range l.Pointwise {
		out[i] = p.ELPD
	}
	return out
}

// Reading returns the plain-words reading of the difference between the best
// model and model m (m > 0): how many standard errors apart they are. A
// difference within 2 standard errors is not taken as evidence; below 4 in
// elpd the difference is small whatever its standard error (Sivula, Magnusson,
// Matamoros & Vehtari 2022, arXiv:2008.10296, from memory).
func (c *Comparison) Reading(m int) string {
	b, o := c.Models[0], c.Models[m]
	d, se := -o.Diff.Value, o.Diff.SE
	z := d / se
	switch {
	case d < 4:
		return fmt.Sprintf("%s and %s are hard to tell apart: %s is ahead by %.1f ± %.1f, a small difference (below 4), whose standard error is itself unreliable.", b.Label, o.Label, b.Label, d, se)
	case z > 2:
		return fmt.Sprintf("%s is better than %s by %.1f ± %.1f: more than 2 standard errors (%.1f).", b.Label, o.Label, d, se, z)
	default:
		return fmt.Sprintf("%s is ahead of %s by %.1f ± %.1f: within 2 standard errors (%.1f), so the catalog does not clearly prefer either.", b.Label, o.Label, d, se, z)
	}
}

// Text returns the comparison as a table with its reading, for people.
func (c *Comparison) Text() string {
	var b strings.Builder
	n := len(c.Sources)
	fmt.Fprintf(&b, "Models compared on %s: %d sources", filepath.Base(c.Catalog), n)
	if len(c.LeftOut) > 0 {
		fmt.Fprintf(&b, " (%d left out of every model, being excluded in at least one run: %s)", len(c.LeftOut), strings.Join(c.LeftOut, ", "))
	}
	b.WriteString(".\nLeave-one-out cross-validation by Pareto-smoothed importance sampling (PSIS-LOO):\n")
	b.WriteString("elpd_loo estimates how well each model predicts a source it was not fitted to, summed\nover sources; higher is better.\n\n")
	w := 0
	for _, m := range c.Models {
		w = max(w, len(m.Label))
	}
	fmt.Fprintf(&b, "%-4s  %-*s  %10s %7s  %9s %7s  %7s  %9s  %s\n", "rank", w, "model", "elpd_loo", "SE", "elpd_diff", "SE", "p_loo", "looic", "high k̂")
	for i, m := range c.Models {
		diff, dse := "0.0", "-"
		if i > 0 {
			diff, dse = fmt.Sprintf("%.1f", m.Diff.Value), fmt.Sprintf("%.1f", m.Diff.SE)
		}
		fmt.Fprintf(&b, "%-4d  %-*s  %10.1f %7.1f  %9s %7s  %7.1f  %9.1f  %d\n", i+1, w, m.Label, m.ELPD.Value, m.ELPD.SE, diff, dse, m.P.Value, m.IC.Value, len(m.HighK))
	}
	b.WriteString("\n")
	for i := 1; i < len(c.Models); i++ {
		b.WriteString(c.Reading(i) + "\n")
	}
	b.WriteString("\nWAIC, less reliable than PSIS-LOO (shown for comparison only):\n")
	for _, m := range c.Models {
		fmt.Fprintf(&b, "  %-*s  elpd_waic %.1f ± %.1f, p_waic %.1f\n", w, m.Label, m.WAICELPD.Value, m.WAICELPD.SE, m.WAICP.Value)
	}
	b.WriteString("\nDraws:\n")
	for _, m := range c.Models {
		fmt.Fprintf(&b, "  %-*s  %d posterior draws", w, m.Label, m.Draws)
		if m.Draws < m.Requested {
			fmt.Fprintf(&b, " (of %d asked for: the chain holds no more draws one autocorrelation time apart)", m.Requested)
		}
		fmt.Fprintf(&b, "; one walker's draws at least %d kept rows apart (τ = %.1f)\n", m.Spacing, m.Tau)
	}
	b.WriteString("  Relative efficiency taken as 1, the draws being about independent.\n")
	for _, m := range c.Models {
		if len(m.HighK) == 0 {
			continue
		}
		var names []string
		for _, h := range m.HighK {
			names = append(names, fmt.Sprintf("%s (%.2f)", h.Source, h.K))
		}
		fmt.Fprintf(&b, "\n%s: %d source(s) with Pareto k̂ above %.2f, where the leave-one-out estimate is unreliable:\n  %s\n",
			m.Label, len(m.HighK), m.KThreshold, strings.Join(names, ", "))
		b.WriteString("  More draws help when k̂ is a little above the threshold (--draws, with a longer chain).\n" +
			"  Otherwise the source is unusually influential: the posterior moves when it is left out.\n" +
			"  Look at it (a wrong parallax, a misidentified arm, a motion far from circular).\n")
	}
	return b.String()
}

// JSON returns the comparison as indented JSON, with null for values that are
// not numbers (an infinite k̂).
func (c *Comparison) JSON() ([]byte, error) {
	data, err := json.MarshalIndent(jsonSafe(c), "", "  ")
	return append(data, '\n'), err
}
