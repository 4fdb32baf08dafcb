package fit

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"math/rand/v2"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"text/tabwriter"

	"gonum.org/v1/gonum/stat"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
)

// Files a finished run adds to its directory.
const (
	SummaryText = "summary.txt"  // the posterior summary, for reading
	SummaryJSON = "summary.json" // the same, for programs
	SourcesCSV  = "sources.csv"  // per-source membership, distance and peculiar motion
	SamplesCSV  = "samples.csv"  // posterior samples of every parameter and derived quantity
)

// Quantity summarises the posterior of one parameter or derived quantity.
type Quantity struct {
	Name string `json:"name"`
	// Median and the 68% and 95% central intervals.
	Median float64 `json:"median"`
	Lo68   float64 `json:"lo68"`
	Hi68   float64 `json:"hi68"`
	Lo95   float64 `json:"lo95"`
	Hi95   float64 `json:"hi95"`
	Mean   float64 `json:"mean"`
	SD     float64 `json:"sd"`
	// MAP is the value at the highest posterior point the pilot stage found (NaN when
	// unknown): the maximum a posteriori point when Summary.MAPConverged.
	MAP float64 `json:"map"`
	// Tau is the integrated autocorrelation time in steps and ESS the effective sample size
	// N/τ.
	Tau float64 `json:"tau"`
	ESS float64 `json:"ess"`
	// Rhat is the rank-normalised split-R̂ and ESSBulk and ESSTail the bulk and tail
	// effective sample sizes of Vehtari et al. (2021, Bayesian Analysis 16, 667), each
	// walker counted as one chain (NaN for a constant series).
	Rhat    float64 `json:"rhat"`
	ESSBulk float64 `json:"ess_bulk"`
	ESSTail float64 `json:"ess_tail"`
	// Prior is the prior stated for a sampled parameter ("" for derived quantities). It is
	// the parameter's effective prior only when no prior is put on a derived quantity:
	// priors on derived quantities multiply the parameters' own (see Summary.DerivedPriors).
	Prior string `json:"stated_prior,omitempty"`
}

// SourceResult is the posterior of one source.
type SourceResult struct {
	Name string `json:"name"`
	// Label is the arm the catalog ties the source to ("" when free).
	Label string `json:"label"`
	// Membership holds P(m | data) for the field and each arm, averaged over posterior draws.
	Membership []float64 `json:"membership"`
	// Best is the most probable component.
	Best string `json:"best"`
	// Distance median and 16th/84th percentiles (kpc), pooled over posterior draws.
	Distance   float64 `json:"distance"`
	DistanceLo float64 `json:"distance_lo"`
	DistanceHi float64 `json:"distance_hi"`
	// R and Beta (deg) of the median distance under the posterior median parameters.
	R    float64 `json:"R"`
	Beta float64 `json:"beta"`
	// InnerProb is the probability that the source lies inside R_inner.
	InnerProb float64 `json:"inner_prob"`
	// U, V, W (km/s) is the posterior mean peculiar motion relative to circular rotation,
	// and USD, VSD, WSD its standard deviation, over posterior draws each at a distance drawn
	// from that draw's distance posterior; NaN unless all kinematics are measured.
	U, V, W          float64 `json:"-"`
	USD, VSD, WSD    float64 `json:"-"`
	PeculiarMeasured bool    `json:"peculiar_measured"`
	// Flags: "inner" (mostly inside R_inner), "excluded" (left out of the fit),
	// "parallax-conflict" (parallax at odds with the distance bounds).
	Flags []string `json:"flags"`
}

// Summary is the posterior summary of a run.
type Summary struct {
	Steps      int     `json:"steps"`
	Walkers    int     `json:"walkers"`
	Burn       int     `json:"burn"`
	Samples    int     `json:"samples"`
	Status     string  `json:"status"`
	Acceptance float64 `json:"acceptance"`
	MaxTau     float64 `json:"max_tau"`
	TauOK      bool    `json:"tau_reliable"`
	// MAPConverged says whether the pilot stage's search for the maximum a posteriori
	// point converged; when it did not, the MAP column is only the best point found.
	MAPConverged bool  `json:"map_converged"`
	Stuck        []int `json:"stuck_walkers"`
	Sampling
	Params     []Quantity `json:"parameters"`
	Derived    []Quantity `json:"derived"`
	Components []string   `json:"components"`
	// FractionsOf says what the membership fractions describe: FractionsOfGalaxy when the
	// model has a survey selection (each source's density is divided by the selected share
	// Σ f_m Z_m, so the fractions are the Galaxy's, before selection), FractionsOfCatalog
	// without one (the shares of the catalog's sources as the survey selected them), or
	// FractionsUnused in the parallax mode.
	FractionsOf string `json:"fractions_of"`
	// DerivedPriors lists the priors put on derived quantities ("Omega_sun ~ normal(…)").
	// Each multiplies the priors of the parameters it depends on, so that their effective
	// prior is not the one stated for each.
	DerivedPriors []string `json:"derived_priors,omitempty"`
	// MedianValues are the posterior medians of every parameter (fixed ones included) by
	// name: the "median model" used for figures and source positions.
	MedianValues map[string]float64 `json:"median_values"`
	Sources      []SourceResult     `json:"sources"`
	Quadrature   model.LayoutStats  `json:"quadrature"`
	// Draws are up to sourceDraws posterior parameter sets (all parameters by name), for
	// figures with credible bands.
	Draws []map[string]float64 `json:"-"`

	samples []byte // the samples table, CSV
}

// Sampling is the cost of a run's effective samples and the moves that made them.
// Evaluations after burn-in are the sampler's count after its tuning steps, scaled to
// the summarised steps; the sampling time after burn-in is the run's sampling time
// in proportion to its evaluations.
type Sampling struct {
	// Evaluations counts every log-density evaluation of the sampler (start and steps,
	// not the pilot stage); EvaluationsPerStep is their mean per step after burn-in,
	// over all walkers.
	Evaluations        int64   `json:"evaluations"`
	EvaluationsPerStep float64 `json:"evaluations_per_step"`
	// MaxTauEvaluations is MaxTau in evaluations: MaxTau × EvaluationsPerStep.
	MaxTauEvaluations float64 `json:"max_tau_evaluations"`
	// SlowestESS is the smallest effective sample size of the parameters;
	// ESSPerEvaluation and ESSPerSecond divide it by the evaluations and by the
	// sampling time (s) after burn-in.
	SlowestESS       float64 `json:"slowest_ess"`
	ESSPerEvaluation float64 `json:"ess_per_evaluation"`
	ESSPerSecond     float64 `json:"ess_per_second"`
	// Moves are the sampler's moves with their weights and slice widths, as frozen
	// after burn-in.
	Moves []MoveUse `json:"moves"`
}

// MoveUse is one move of a run.
type MoveUse struct {
	// Move describes the move and its settings.
	Move string `json:"move"`
	// Weight is its probability of being chosen after burn-in.
	Weight float64 `json:"weight"`
	// Width is the slice width μ (in units of the direction) after burn-in; 0 for moves
	// that are not slice moves.
	Width float64 `json:"width"`
}

// fill fills in the cost of the effective samples, for burn steps left out of a
// chain of steps.
func (s *Sampling) fill(res *mcmc.Result, steps, burn int, maxTau float64, params []Quantity) {
	s.SlowestESS = math.NaN()
	for _, q := range params {
		if !math.IsNaN(q.ESS) && !(q.ESS >= s.SlowestESS) { // NaN for a constant parameter
			s.SlowestESS = q.ESS
		}
	}
	s.EvaluationsPerStep, s.MaxTauEvaluations, s.ESSPerEvaluation, s.ESSPerSecond = math.NaN(), math.NaN(), math.NaN(), math.NaN()
	if res == nil {
		return
	}
	s.Evaluations = res.Evaluations
	for k, m := range res.Moves {
		s.Moves = append(s.Moves, MoveUse{Move: m, Weight: res.Weights[k], Width: res.Widths[k]})
	}
	if steps <= res.TuneSteps || res.Evaluations == 0 {
		return
	}
	s.EvaluationsPerStep = float64(res.Evaluations-res.TunedEvaluations) / float64(steps-res.TuneSteps)
	s.MaxTauEvaluations = maxTau * s.EvaluationsPerStep
	after := s.EvaluationsPerStep * float64(steps-burn)
	s.ESSPerEvaluation = s.SlowestESS / after
	s.ESSPerSecond = s.SlowestESS / (res.Seconds * after / float64(res.Evaluations))
}

// maxSampleRows bounds the rows of the samples table; longer chains are thinned evenly.
const maxSampleRows = 20000

// samplesTable renders every parameter and derived quantity at the kept samples after
// burn-in, thinned to at most maxSampleRows rows, as CSV with columns step, walker and one
// per quantity.
func samplesTable(names []string, steps []int, series [][][]float64) []byte {
	var b bytes.Buffer
	b.WriteString("step,walker," + strings.Join(names, ",") + "\n")
	if len(series) == 0 {
		return b.Bytes()
	}
	W, n := len(series[0]), len(steps)
	stride := max(1, (n*W+maxSampleRows-1)/maxSampleRows)
	for r := 0; r < n*W; r += stride {
		t, k := r/W, r%W
		b.WriteString(strconv.Itoa(steps[t]) + "," + strconv.Itoa(k))
		for q := range series {
			b.WriteByte(',')
			if v := series[q][k][t]; !math.IsNaN(v) {
				b.WriteString(strconv.FormatFloat(v, 'g', 10, 64))
			}
		}
		b.WriteByte('\n')
	}
	return b.Bytes()
}

// sourceDraws is the number of posterior draws the per-source results average over.
const sourceDraws = 100

// Summarise makes the posterior summary of a chain. res may be nil (a chain read back from
// a file); pilot may be nil.
func Summarise(job *Job, chain *mcmc.Chain, res *mcmc.Result, pilot *PilotResult) (*Summary, error) {
	cfg := job.Config
	rows := chain.Len()
	if rows < 4 {
		return nil, fmt.Errorf("summarising: the chain has %d steps; too short", rows)
	}
	burn := cfg.Sampler.Burn
	if burn == 0 {
		burn = rows / 4
	}
	tune := TuneSteps(cfg.Sampler)
	if res != nil {
		tune = res.TuneSteps
	}
	burn = min(max(burn, tune), rows-2) // the tuning steps are never summarised
	W := chain.Walkers()
	s := &Summary{Steps: chain.Step(rows - 1), Walkers: W, Burn: burn, Components: components(job.Spec), FractionsOf: fractionsOf(job.Spec)}
	if res != nil {
		s.Status, s.Acceptance, s.TauOK = res.Status.String(), res.MeanAcceptance(), res.TauReliable
		for _, st := range res.Stuck {
			s.Stuck = append(s.Stuck, st.Walker)
		}
	}
	s.Quadrature = job.Like.Summary()

	// Every reported quantity at every kept (row, walker) after burn-in.
	paramNames := append(job.Config.ParamNames(), fractionNames(job.Spec)...)
	derivedNames := model.DerivedNames(job.Spec)
	names := append(append([]string(nil), paramNames...), derivedNames...)
	nq := len(names)
	n := rows - burn
	series := make([][][]float64, nq) // [quantity][walker][row]
	for q := range series {
		series[q] = make([][]float64, W)
		for k := range W {
			series[q][k] = make([]float64, n)
		}
	}
	// Each kept row is written to its own slots, so the threads do not change the result.
	model.Parallel(n, cfg.Sampler.Threads, func(r int) {
		for k, x := range chain.Positions(burn+r, nil) {
			vals, der := job.values(x)
			for q, name := range paramNames {
				series[q][k][r] = vals[name]
			}
			for q, name := range derivedNames {
				series[len(paramNames)+q][k][r] = der[name]
			}
		}
	})
	s.Samples = n * W
	s.samples = samplesTable(names, chain.Steps()[burn:], series)
	var mapVals, mapDer map[string]float64
	if pilot != nil {
		mapVals, mapDer = job.values(pilot.MAP)
		s.MAPConverged = pilot.MAPConverged
	}
	for _, p := range cfg.DerivedPriors {
		s.DerivedPriors = append(s.DerivedPriors, p.Name+" ~ "+p.Prior.String())
	}
	isFraction := map[string]bool{}
	for _, name := range fractionNames(job.Spec) {
		isFraction[name] = true
	}
	free := map[string]string{}
	for i, name := range job.Config.ParamNames() {
		if p := job.Config.Priors()[i]; !p.IsFixed() {
			free[name] = p.String()
		}
	}
	// Each quantity's statistics go to its own slot, whatever the threads.
	stats := make([]Quantity, nq)
	model.Parallel(nq, cfg.Sampler.Threads, func(q int) {
		name := names[q]
		flat := make([]float64, 0, n*W)
		for k := range W {
			flat = append(flat, series[q][k]...)
		}
		qt := describe(name, flat)
		qt.MAP = math.NaN()
		if v, ok := mapVals[name]; ok {
			qt.MAP = v
		} else if v, ok := mapDer[name]; ok {
			qt.MAP = v
		}
		// τ is NaN for a constant or too short series, and so is the ESS then.
		qt.Tau, _ = mcmc.AutocorrTime(series[q], 5)
		qt.ESS = float64(n*W) / qt.Tau
		qt.Rhat, qt.ESSBulk, qt.ESSTail = mcmc.SplitRhat(series[q]), mcmc.BulkESS(series[q]), mcmc.TailESS(series[q])
		stats[q] = qt
	})
	s.MedianValues = map[string]float64{}
	for q, name := range names {
		qt := stats[q]
		if q < len(paramNames) {
			s.MedianValues[name] = qt.Median
		}
		if q < len(paramNames) {
			if pr, ok := free[name]; ok || isFraction[name] {
				qt.Prior = pr
				if isFraction[name] {
					qt.Prior = fmt.Sprintf("dirichlet(%g)", cfg.Membership.Concentration)
				}
				if !job.Spec.Galaxy && isFraction[name] {
					continue
				}
				s.Params = append(s.Params, qt)
				if !math.IsNaN(qt.Tau) {
					s.MaxTau = max(s.MaxTau, qt.Tau)
				}
			}
		} else {
			s.Derived = append(s.Derived, qt)
		}
	}
	s.Sampling.fill(res, s.Steps, burn, s.MaxTau, s.Params)
	// Posterior draws for the per-source results and the figures: spread evenly over the
	// kept rows after burn-in, cycling through the walkers.
	// The memberships and distance posteriors they serve are ratios in which the
	// selection's normalisation cancels: the draws are made without it.
	nd := min(sourceDraws, n*W)
	var draws []*model.Params
	for i := range nd {
		vals := job.Post.Values(chain.Position(burn+i*n/nd, i%W, nil))
		p, err := job.Spec.NewParamsUnnormalised(vals)
		if err != nil {
			continue
		}
		draws = append(draws, p)
		s.Draws = append(s.Draws, vals)
	}
	// Medians of the fractions need not add up to one: rescale them for the median model.
	var fsum float64
	for _, name := range fractionNames(job.Spec) {
		fsum += s.MedianValues[name]
	}
	for _, name := range fractionNames(job.Spec) {
		s.MedianValues[name] /= fsum
	}
	median, err := job.Spec.NewParams(s.MedianValues)
	if err != nil {
		return nil, fmt.Errorf("summarising: posterior medians: %w", err)
	}
	s.Sources = SourceResults(job, draws, median)
	return s, nil
}

// values returns every parameter's value and the derived quantities at sampled point x.
// None of the derived quantities needs the selection's normalisation.
func (j *Job) values(x []float64) (map[string]float64, map[string]float64) {
	vals := j.Post.Values(x)
	p, err := j.Spec.NewParamsUnnormalised(vals)
	if err != nil {
		return vals, map[string]float64{}
	}
	return vals, model.Derived(p, j.Spec)
}

func components(s *model.Spec) []string {
	out := make([]string, s.NumComponents())
	for m := range out {
		out[m] = s.ComponentName(m)
	}
	return out
}

func fractionNames(s *model.Spec) []string {
	out := make([]string, s.NumComponents())
	for m := range out {
		out[m] = s.FractionName(m)
	}
	return out
}

// describe returns the quantiles and moments of a sample, NaN values left out.
func describe(name string, x []float64) Quantity {
	v := make([]float64, 0, len(x))
	for _, a := range x {
		if !math.IsNaN(a) {
			v = append(v, a)
		}
	}
	q := Quantity{Name: name}
	if len(v) == 0 {
		nan := math.NaN()
		q.Median, q.Lo68, q.Hi68, q.Lo95, q.Hi95, q.Mean, q.SD = nan, nan, nan, nan, nan, nan, nan
		return q
	}
	slices.Sort(v)
	qs := mcmc.Quantiles([]float64{0.5, 0.16, 0.84, 0.025, 0.975}, v, nil)
	q.Median, q.Lo68, q.Hi68, q.Lo95, q.Hi95 = qs[0], qs[1], qs[2], qs[3], qs[4]
	q.Mean = v[0]
	if len(v) > 1 {
		q.Mean, q.SD = stat.MeanStdDev(v, nil)
	}
	return q
}

// peculiarSeed seeds the distance draws of the peculiar motions (one stream per source).
const peculiarSeed = 0x7065630a

// SourceResults returns each source's posterior, averaged over the parameter sets draws
// (memberships averaged; distance masses pooled on the source's fixed nodes; peculiar
// motions at one distance per draw, drawn from that draw's distance posterior), with
// positions under the median parameters. No result needs the selection's normalisation:
// the draws may be made without it (model.Spec.NewParamsUnnormalised).
func SourceResults(job *Job, draws []*model.Params, median *model.Params) []SourceResult {
	L, spec := job.Like, job.Spec
	nc := spec.NumComponents()
	out := make([]SourceResult, len(L.Sources))
	rInner := spec.Bar.RInner
	workers := job.Config.Sampler.Threads
	model.Parallel(len(L.Sources), workers, func(i int) {
		src := &L.Sources[i]
		r := SourceResult{Name: src.Name, Membership: make([]float64, nc)}
		if src.Label > 0 {
			r.Label = spec.Arms[src.Label-1].Name
		}
		d, w := L.NodeDistances(i), L.Layout(i).Weights()
		pooled := make([]float64, len(d))
		memb := make([]float64, nc)
		posts := make([]*model.DistancePosterior, len(draws))
		motions := make([]*model.Motion, len(draws))
		var mass []float64
		for k, p := range draws {
			L.SourceDetail(i, p, memb)
			for m := range memb {
				r.Membership[m] += memb[m] / float64(len(draws))
			}
			mass = L.NodeMasses(i, p, mass)
			for j := range mass {
				pooled[j] += mass[j] / float64(len(draws))
			}
			posts[k], motions[k] = model.NewDistancePosterior(d, w, mass), p.Motion
		}
		best := 0
		for m := range r.Membership {
			if r.Membership[m] > r.Membership[best] {
				best = m
			}
		}
		r.Best = spec.ComponentName(best)
		dp := model.NewDistancePosterior(d, w, pooled)
		r.Distance, r.DistanceLo, r.DistanceHi = dp.Quantile(0.5), dp.Quantile(0.16), dp.Quantile(0.84)
		R, cb, sb := src.Sight.InPlane(median.Motion.R0(), r.Distance)
		r.R, r.Beta = R, math.Atan2(sb, cb)*180/math.Pi
		for j := range d {
			if Rj, _, _ := src.Sight.InPlane(median.Motion.R0(), d[j]); Rj < rInner {
				r.InnerProb += pooled[j]
			}
		}
		r.U, r.V, r.W, r.USD, r.VSD, r.WSD = math.NaN(), math.NaN(), math.NaN(), math.NaN(), math.NaN(), math.NaN()
		// One distance per draw, from that draw's own distance posterior, so that the
		// spread carries the distance's uncertainty as well as the parameters'.
		rng := rand.New(rand.NewPCG(peculiarSeed, uint64(i)))
		if uvw, ok := model.PeculiarDraws(src, motions, posts, rng); ok {
			r.PeculiarMeasured = true
			us, vs, ws := make([]float64, len(uvw)), make([]float64, len(uvw)), make([]float64, len(uvw))
			for k, v := range uvw {
				us[k], vs[k], ws[k] = v.U, v.V, v.W
			}
			r.U, r.USD = meanSD(us)
			r.V, r.VSD = meanSD(vs)
			r.W, r.WSD = meanSD(ws)
		}
		if r.InnerProb > 0.5 {
			r.Flags = append(r.Flags, "inner")
		}
		if L.Excluded[i] {
			r.Flags = append(r.Flags, "excluded")
		}
		if L.Contradicts[i] {
			r.Flags = append(r.Flags, "parallax-conflict")
		}
		out[i] = r
	})
	return out
}

// meanSD returns the mean and the standard deviation (divisor N − 1) of x: NaN for what
// too few values leave undefined.
func meanSD(x []float64) (float64, float64) {
	switch len(x) {
	case 0:
		return math.NaN(), math.NaN()
	case 1:
		return x[0], math.NaN()
	}
	return stat.MeanStdDev(x, nil)
}

// What the membership fractions describe (Summary.FractionsOf).
const (
	FractionsOfGalaxy  = "galaxy"
	FractionsOfCatalog = "catalog"
	FractionsUnused    = "unused"
)

// fractionsOf says what the membership fractions of spec describe.
func fractionsOf(spec *model.Spec) string {
	switch {
	case !spec.Galaxy:
		return FractionsUnused
	case spec.Selection.Active():
		return FractionsOfGalaxy
	}
	return FractionsOfCatalog
}

// fractionsNote is the sentence of the text summary that says what the fractions describe.
func fractionsNote(of string) string {
	switch of {
	case FractionsOfGalaxy:
		return "Membership fractions f_… are the Galaxy's: the survey's selection is divided out, so they describe the sources before selection, not the catalog's shares."
	case FractionsOfCatalog:
		return "Membership fractions f_… are the catalog's shares: with no [selection] table they describe the sources as the survey selected them, not the Galaxy."
	}
	return ""
}

// Text renders the summary for reading.
func (s *Summary) Text() string {
	var b bytes.Buffer
	fmt.Fprintf(&b, "Posterior summary: %d steps × %d walkers, first %d steps discarded, %d samples; %s\n",
		s.Steps, s.Walkers, s.Burn, s.Samples, s.Status)
	fmt.Fprintf(&b, "Acceptance fraction %.3f; longest autocorrelation time %.1f steps (chain = %.0f τ)",
		s.Acceptance, s.MaxTau, float64(s.Steps)/math.Max(s.MaxTau, 1e-300))
	if !s.TauOK {
		fmt.Fprint(&b, "; τ estimates not yet reliable: run longer")
	}
	fmt.Fprintln(&b)
	if s.Evaluations > 0 {
		fmt.Fprintf(&b, "Likelihood evaluations %d, %s per step after burn-in; longest τ = %s evaluations\n",
			s.Evaluations, fixed1(s.EvaluationsPerStep), fixed0(s.MaxTauEvaluations))
		fmt.Fprintf(&b, "Slowest parameter: ESS %s, %s per 1000 evaluations, %s per second\n",
			fixed0(s.SlowestESS), num(1000*s.ESSPerEvaluation), num(s.ESSPerSecond))
		fmt.Fprint(&b, "Moves after burn-in:")
		for i, m := range s.Moves {
			if i > 0 {
				fmt.Fprint(&b, ";")
			}
			fmt.Fprintf(&b, " %s weight %.3f", m.Move, m.Weight)
			if m.Width > 0 {
				fmt.Fprintf(&b, ", width %.3g", m.Width)
			}
		}
		fmt.Fprintln(&b)
	}
	if len(s.Stuck) > 0 {
		fmt.Fprintf(&b, "Walkers that look stuck: %v\n", s.Stuck)
	}
	fmt.Fprintf(&b, "Distance quadrature: %d nodes per source (median; %d to %d)\n",
		s.Quadrature.MedianNodes, s.Quadrature.MinNodes, s.Quadrature.MaxNodes)
	mapColumn := "MAP"
	if !s.MAPConverged {
		mapColumn = "best found"
		fmt.Fprintln(&b, "The search for the maximum a posteriori point did not converge: the column \"best found\" is the highest point it reached, not a maximum.")
	}
	if len(s.DerivedPriors) > 0 {
		fmt.Fprintf(&b, "Priors on derived quantities (%s) multiply the parameters' own priors: the effective prior of each parameter they depend on is not the one stated for it.\n",
			strings.Join(s.DerivedPriors, "; "))
	}
	var highRhat []string
	for _, q := range append(append([]Quantity(nil), s.Params...), s.Derived...) {
		if q.Rhat > RhatLimit {
			highRhat = append(highRhat, q.Name)
		}
	}
	if len(highRhat) > 0 {
		fmt.Fprintf(&b, "R̂ above %g (walkers disagree; run longer): %s\n", RhatLimit, strings.Join(highRhat, ", "))
	}
	fmt.Fprintln(&b)
	table := func(title string, qs []Quantity) {
		fmt.Fprintln(&b, title)
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintf(tw, "quantity\tmedian\t−68%%\t+68%%\t95%% interval\t%s\tτ\tESS\tbulk ESS\ttail ESS\tR̂\t\n", mapColumn)
		for _, q := range qs {
			fmt.Fprintf(tw, "%s\t%s\t%s\t%s\t[%s, %s]\t%s\t%s\t%s\t%s\t%s\t%s\t\n", q.Name, num(q.Median), num(q.Median-q.Lo68), num(q.Hi68-q.Median),
				num(q.Lo95), num(q.Hi95), num(q.MAP), fixed1(q.Tau), fixed0(q.ESS), fixed0(q.ESSBulk), fixed0(q.ESSTail), fixed3(q.Rhat))
		}
		tw.Flush()
		fmt.Fprintln(&b)
	}
	table("Parameters", s.Params)
	if note := fractionsNote(s.FractionsOf); note != "" {
		fmt.Fprintln(&b, note)
		fmt.Fprintln(&b)
	}
	table("Derived quantities", s.Derived)
	counts := make([]int, len(s.Components))
	for _, r := range s.Sources {
		for m, c := range s.Components {
			if r.Best == c {
				counts[m]++
			}
		}
	}
	fmt.Fprint(&b, "Most probable component of each source:")
	for m, c := range s.Components {
		fmt.Fprintf(&b, " %s %d", c, counts[m])
		if m < len(s.Components)-1 {
			fmt.Fprint(&b, ",")
		}
	}
	fmt.Fprintln(&b)
	return b.String()
}

func num(x float64) string {
	if math.IsNaN(x) {
		return "–"
	}
	a := math.Abs(x)
	switch {
	case a == 0:
		return "0"
	case a >= 1000 || a < 0.001:
		return strconv.FormatFloat(x, 'e', 3, 64)
	case a >= 100:
		return strconv.FormatFloat(x, 'f', 1, 64)
	case a >= 1:
		return strconv.FormatFloat(x, 'f', 3, 64)
	default:
		return strconv.FormatFloat(x, 'f', 4, 64)
	}
}

func fixed1(x float64) string {
	if math.IsNaN(x) {
		return "–"
	}
	return strconv.FormatFloat(x, 'f', 1, 64)
}

func fixed3(x float64) string {
	if math.IsNaN(x) {
		return "–"
	}
	return strconv.FormatFloat(x, 'f', 3, 64)
}

// RhatLimit is the split-R̂ above which a quantity is reported as not converged, the
// threshold recommended by Vehtari et al. (2021, Bayesian Analysis 16, 667).
const RhatLimit = 1.01

func fixed0(x float64) string {
	if math.IsNaN(x) {
		return "–"
	}
	return strconv.FormatFloat(x, 'f', 0, 64)
}

// SourcesTable renders the per-source results as CSV.
func (s *Summary) SourcesTable() []byte {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	head := []string{"name", "label", "best"}
	for _, c := range s.Components {
		head = append(head, "p_"+c)
	}
	head = append(head, "distance", "distance_lo", "distance_hi", "R", "beta", "inner_prob", "U", "U_sd", "V", "V_sd", "W", "W_sd", "flags")
	w.Write(head)
	f := func(x float64) string {
		if math.IsNaN(x) {
			return ""
		}
		return strconv.FormatFloat(x, 'g', 6, 64)
	}
	for _, r := range s.Sources {
		row := []string{r.Name, r.Label, r.Best}
		for _, p := range r.Membership {
			row = append(row, strconv.FormatFloat(p, 'f', 4, 64))
		}
		row = append(row, f(r.Distance), f(r.DistanceLo), f(r.DistanceHi), f(r.R), f(r.Beta), f(r.InnerProb),
			f(r.U), f(r.USD), f(r.V), f(r.VSD), f(r.W), f(r.WSD), strings.Join(r.Flags, ";"))
		w.Write(row)
	}
	w.Flush()
	return b.Bytes()
}

// Write writes the summary's files into a run directory, each atomically.
func (s *Summary) Write(dir string) error {
	if err := atomicfile.Write(filepath.Join(dir, SummaryText), []byte(s.Text())); err != nil {
		return err
	}
	if err := atomicfile.Write(filepath.Join(dir, SourcesCSV), s.SourcesTable()); err != nil {
		return err
	}
	if s.samples != nil {
		if err := atomicfile.Write(filepath.Join(dir, SamplesCSV), s.samples); err != nil {
			return err
		}
	}
	return writeJSON(filepath.Join(dir, SummaryJSON), jsonSafe(s))
}
