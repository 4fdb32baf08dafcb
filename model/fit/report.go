package fit

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"math"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
)

// ReportQuantity summarises the posterior of one parameter or derived quantity over one
// or several runs.
type ReportQuantity struct {
	Median float64 `json:"median"`
	P16    float64 `json:"p16"`
	P84    float64 `json:"p84"`
	P2_5   float64 `json:"p2.5"`
	P97_5  float64 `json:"p97.5"`
	Mean   float64 `json:"mean"`
	SD     float64 `json:"sd"`
	// Tau is the integrated autocorrelation time in steps (ensemble form, over every
	// walker of every run).
	Tau float64 `json:"tau"`
	// ESSBulk, ESSTail and Rhat follow Vehtari et al. (2021, Bayesian Analysis 16, 667),
	// every walker of every run counted as one chain, so that runs that disagree raise R̂;
	// RhatWithin is the largest split-R̂ within any one run.
	ESSBulk    float64 `json:"ess_bulk"`
	ESSTail    float64 `json:"ess_tail"`
	Rhat       float64 `json:"rhat"`
	RhatWithin float64 `json:"rhat_within"`
}

// ReportSource is one catalog source's row of a report: its posterior as in the run's
// sources table, and the kinematic distances its line-of-sight velocity gives under the
// posterior median model.
type ReportSource struct {
	Name  string `json:"name"`
	Label string `json:"label"`
	Best  string `json:"best"`
	// Membership is P(m | data) by component name.
	Membership map[string]float64 `json:"membership"`
	// Distance is the distance posterior (kpc).
	Distance Interval `json:"distance"`
	// R (kpc), Beta (deg), InnerProb, the peculiar motion and Flags are as in SourceResult.
	R         float64  `json:"R"`
	Beta      float64  `json:"beta"`
	InnerProb float64  `json:"inner_prob"`
	U         float64  `json:"U"`
	USD       float64  `json:"U_sd"`
	V         float64  `json:"V"`
	VSD       float64  `json:"V_sd"`
	W         float64  `json:"W"`
	WSD       float64  `json:"W_sd"`
	Flags     []string `json:"flags"`
	// KinematicNear and KinematicFar are the nearest and farthest distances (kpc) at which
	// the median model predicts the source's v_LSR (NaN when none, as beyond the terminal
	// velocity, or without a velocity; equal when there is one).
	KinematicNear float64 `json:"kinematic_near"`
	KinematicFar  float64 `json:"kinematic_far"`
	// KinematicConflict says that no kinematic distance lies within 3σ of the distance the
	// parallax gives (see kinematicAgrees).
	KinematicConflict bool `json:"kinematic_conflict"`
	// Height is z = d sin b + z⊙ (kpc), the source's height above the mid-plane of the
	// sources' layer at its median distance under the posterior median model; NaN for a
	// model without vertical structure. A source with |z| above OffPlaneHeights scale
	// heights is flagged "off-plane".
	Height float64 `json:"z"`

	res SourceResult
}

// ReportRun describes one run of a report.
type ReportRun struct {
	Dir     string `json:"dir"`
	Steps   int    `json:"steps"`
	Walkers int    `json:"walkers"`
	Seed    uint64 `json:"seed"`
	State   string `json:"state"`
}

// Report is the posterior of one run, or of several runs of one model merged.
type Report struct {
	Parameters map[string]ReportQuantity `json:"parameters"`
	Derived    map[string]ReportQuantity `json:"derived"`
	Sources    []ReportSource            `json:"sources"`
	Warnings   []string                  `json:"warnings"`
	Runs       []ReportRun               `json:"runs"`
	// Burn is the number of kept rows of each chain left out; Samples the number of
	// samples after it, over all runs.
	Burn    int `json:"burn"`
	Samples int `json:"samples"`
	// ParamOrder and DerivedOrder keep the quantities' order for tables.
	ParamOrder   []string `json:"-"`
	DerivedOrder []string `json:"-"`
	components   []string
}

// OffPlaneHeights is the height, in scale heights of the sources' layer, beyond which a
// source is flagged "off-plane": a Gaussian layer puts 0.27% of its sources there, so a
// catalog with many is telling of a layer that is not a thin Gaussian about b = 0 (a warp
// or a flaring layer in the outer Galaxy), which pulls such sources toward the Sun.
const OffPlaneHeights = 3

// layerHeight returns the height z = d sin b + z⊙ (kpc) of source s at distance d (kpc)
// under p, and whether |z| exceeds OffPlaneHeights scale heights; NaN and false for a spec
// without vertical structure.
func layerHeight(spec *model.Spec, p *model.Params, s *model.Source, d float64) (float64, bool) {
	if !spec.Vertical || !spec.Galaxy {
		return math.NaN(), false
	}
	z := d*s.Sight.SinB + p.ZSun
	return z, math.Abs(z) > OffPlaneHeights*p.ScaleHeight
}

// MinTauLengths is the chain length, in autocorrelation times, below which a report
// warns: the rule of thumb for ensemble samplers (common practice, no source).
const MinTauLengths = 50

// NewReport summarises one or several runs of the same model (see SameModel), leaving out
// the first burn kept rows of each (see Run.Burn; burn ≤ 0 takes the configuration's).
func NewReport(runs []*Run, burn int) (*Report, error) {
	if len(runs) == 0 {
		return nil, fmt.Errorf("report: no runs")
	}
	first, err := MergeRuns(runs)
	if err != nil {
		return nil, err
	}
	merged := first.Chain
	b := first.Burn(burn)
	sum, err := first.Summary(b)
	if err != nil {
		return nil, err
	}
	rep := &Report{Parameters: map[string]ReportQuantity{}, Derived: map[string]ReportQuantity{},
		Burn: b, Samples: sum.Samples, components: sum.Components, Warnings: []string{}}
	for _, r := range runs {
		rep.Runs = append(rep.Runs, ReportRun{Dir: r.Dir, Steps: r.Chain.Step(r.Chain.Len() - 1), Walkers: r.Chain.Walkers(),
			Seed: r.Job.Config.Sampler.Seed, State: r.Manifest.State})
	}
	// Within-run R̂ needs each run's own series of every quantity.
	within := map[string]float64{}
	for _, r := range runs {
		for name, series := range quantitySeries(r, b) {
			within[name] = math.Max(within[name], mcmc.SplitRhat(series))
		}
	}
	convert := func(q Quantity) ReportQuantity {
		return ReportQuantity{Median: q.Median, P16: q.Lo68, P84: q.Hi68, P2_5: q.Lo95, P97_5: q.Hi95, Mean: q.Mean, SD: q.SD,
			Tau: q.Tau, ESSBulk: q.ESSBulk, ESSTail: q.ESSTail, Rhat: q.Rhat, RhatWithin: within[q.Name]}
	}
	var maxTau float64
	var tauOf string
	var high []string
	for _, q := range sum.Params {
		rep.Parameters[q.Name] = convert(q)
		rep.ParamOrder = append(rep.ParamOrder, q.Name)
		if q.Tau > maxTau {
			maxTau, tauOf = q.Tau, q.Name
		}
		if q.Rhat > RhatLimit {
			high = append(high, fmt.Sprintf("%s (%.3f)", q.Name, q.Rhat))
		}
	}
	for _, q := range sum.Derived {
		rep.Derived[q.Name] = convert(q)
		rep.DerivedOrder = append(rep.DerivedOrder, q.Name)
	}
	if len(high) > 0 {
		what := "the walkers disagree"
		if len(runs) > 1 {
			what = "the walkers or the runs disagree"
		}
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("R̂ above %g, %s: %s", RhatLimit, what, strings.Join(high, ", ")))
	}
	kept := merged.Step(merged.Len()-1) - merged.Step(b)
	if maxTau > 0 && float64(kept) < MinTauLengths*maxTau {
		rep.Warnings = append(rep.Warnings, fmt.Sprintf("the chain after burn-in is %d steps, shorter than %d τ (τ = %.0f steps for %s): run longer",
			kept, MinTauLengths, maxTau, tauOf))
	}
	if !sum.MAPConverged {
		rep.Warnings = append(rep.Warnings, "the search for the MAP point did not converge")
	}
	median, err := runs[0].Job.Spec.NewParams(sum.MedianValues)
	if err != nil {
		return nil, err
	}
	spec := runs[0].Job.Spec
	dMax := spec.DMax
	for i, s := range sum.Sources {
		rs := ReportSource{Name: s.Name, Label: s.Label, Best: s.Best, Membership: map[string]float64{},
			Distance: Interval{Median: s.Distance, P16: s.DistanceLo, P84: s.DistanceHi}, R: s.R, Beta: s.Beta, InnerProb: s.InnerProb,
			U: s.U, USD: s.USD, V: s.V, VSD: s.VSD, W: s.W, WSD: s.WSD, Flags: append([]string{}, s.Flags...),
			KinematicNear: math.NaN(), KinematicFar: math.NaN(), Height: math.NaN(), res: s}
		for m, c := range sum.Components {
			rs.Membership[c] = s.Membership[m]
		}
		src := &runs[0].Job.Like.Sources[i]
		var off bool
		if rs.Height, off = layerHeight(spec, median, src, s.Distance); off {
			rs.Flags = append(rs.Flags, "off-plane")
		}
		if src.HasV {
			v := src.V
			if !src.VLSR {
				v = src.Sight.HelioToLSR(v)
			}
			if sol, err := median.Motion.KinematicDistances(&src.Sight, v, dMax); err == nil && len(sol.Distances) > 0 {
				rs.KinematicNear, rs.KinematicFar = sol.Distances[0], sol.Distances[len(sol.Distances)-1]
				rs.KinematicConflict = true
				for _, d := range sol.Distances {
					if kinematicAgrees(median, src, d) {
						rs.KinematicConflict = false
					}
				}
			}
			if rs.KinematicConflict {
				rs.Flags = append(rs.Flags, "kinematic-conflict")
			}
		}
		rep.Sources = append(rep.Sources, rs)
	}
	return rep, nil
}

// kinematicAgrees reports whether kinematic distance d (kpc) of src lies within 3σ of
// the parallax's distance 1/ϖ under p, σ combining in quadrature the parallax's distance
// error σϖ/ϖ² and the kinematic distance's, √(σ_v² + σ_vir²)/|dv_LSR/dd| (first-order
// error propagation; common practice, no source). A parallax of less than 3σϖ agrees with
// any distance beyond 1/(ϖ + 3σϖ).
func kinematicAgrees(p *model.Params, src *model.Source, d float64) bool {
	if src.Plx < 3*src.PlxErr {
		return d >= 1/(src.Plx+3*src.PlxErr) || src.Plx+3*src.PlxErr <= 0
	}
	const h = 1e-3 // kpc
	slope := (p.Motion.VLSR(&src.Sight, d+h) - p.Motion.VLSR(&src.Sight, max(d-h, 1e-6))) / (d + h - max(d-h, 1e-6))
	sv := math.Hypot(src.VErr, p.SigmaVir)
	sKin := math.Inf(1)
	if slope != 0 {
		sKin = sv / math.Abs(slope)
	}
	sPlx := src.PlxErr / (src.Plx * src.Plx)
	return math.Abs(d-1/src.Plx) <= 3*math.Hypot(sKin, sPlx)
}

// quantitySeries returns every parameter's and derived quantity's trace, by name, indexed
// [walker][kept row] after burn.
func quantitySeries(r *Run, burn int) map[string][][]float64 {
	c := r.Chain
	rows, W := c.Len()-burn, c.Walkers()
	out := map[string][][]float64{}
	var x []float64
	for t := burn; t < c.Len(); t++ {
		for k := range W {
			x = c.Position(t, k, x)
			vals, der := r.Job.values(x)
			for _, m := range []map[string]float64{vals, der} {
				for name, v := range m {
					s, ok := out[name]
					if !ok {
						s = make([][]float64, W)
						for w := range s {
							s[w] = make([]float64, rows)
						}
						out[name] = s
					}
					s[k][t-burn] = v
				}
			}
		}
	}
	return out
}

// Text renders the report for reading.
func (r *Report) Text() string {
	var b bytes.Buffer
	for _, run := range r.Runs {
		fmt.Fprintf(&b, "Run %s: %d steps × %d walkers, seed %d, %s\n", run.Dir, run.Steps, run.Walkers, run.Seed, run.State)
	}
	fmt.Fprintf(&b, "%d samples after leaving out the first %d kept rows of each chain\n", r.Samples, r.Burn)
	for _, w := range r.Warnings {
		fmt.Fprintf(&b, "warning: %s\n", w)
	}
	table := func(title string, order []string, qs map[string]ReportQuantity) {
		fmt.Fprintf(&b, "\n%s\n", title)
		tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', tabwriter.AlignRight)
		fmt.Fprintln(tw, "quantity\tmedian\t68% interval\t95% interval\tτ\tbulk ESS\ttail ESS\tR̂\tR̂ within\t")
		for _, n := range order {
			q := qs[n]
			fmt.Fprintf(tw, "%s\t%s\t[%s, %s]\t[%s, %s]\t%s\t%s\t%s\t%s\t%s\t\n", n, num(q.Median), num(q.P16), num(q.P84),
				num(q.P2_5), num(q.P97_5), fixed1(q.Tau), fixed0(q.ESSBulk), fixed0(q.ESSTail), fixed3(q.Rhat), fixed3(q.RhatWithin))
		}
		tw.Flush()
	}
	table("Parameters", r.ParamOrder, r.Parameters)
	table("Derived quantities", r.DerivedOrder, r.Derived)
	layer := r.hasHeights()
	if layer {
		fmt.Fprintln(&b, "\nSources (distances and heights z in kpc; z at the median distance; kinematic distances from v_LSR under the median model)")
	} else {
		fmt.Fprintln(&b, "\nSources (distances in kpc; kinematic distances from v_LSR under the median model)")
	}
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
	zHead := ""
	if layer {
		zHead = "z\t"
	}
	fmt.Fprintln(tw, "name\tbest\tP(best)\tdistance\t68% interval\t"+zHead+"near\tfar\tflags\t")
	for _, s := range r.Sources {
		z := ""
		if layer {
			z = num(s.Height) + "\t"
		}
		fmt.Fprintf(tw, "%s\t%s\t%.3f\t%s\t[%s, %s]\t%s%s\t%s\t%s\t\n", s.Name, s.Best, s.Membership[s.Best], num(s.Distance.Median),
			num(s.Distance.P16), num(s.Distance.P84), z, num(s.KinematicNear), num(s.KinematicFar), strings.Join(s.Flags, ";"))
	}
	tw.Flush()
	return b.String()
}

// hasHeights reports whether the sources have heights: the model has a vertical layer.
func (r *Report) hasHeights() bool {
	return len(r.Sources) > 0 && !math.IsNaN(r.Sources[0].Height)
}

// SourcesCSV renders the per-source rows as CSV: the columns of a run's sources table,
// then kinematic_near, kinematic_far, for a model with a vertical layer the height z, and
// the flags.
func (r *Report) SourcesCSV() []byte {
	var b bytes.Buffer
	w := csv.NewWriter(&b)
	head := []string{"name", "label", "best"}
	for _, c := range r.components {
		head = append(head, "p_"+c)
	}
	head = append(head, "distance", "distance_lo", "distance_hi", "R", "beta", "inner_prob", "U", "U_sd", "V", "V_sd", "W", "W_sd",
		"kinematic_near", "kinematic_far")
	layer := r.hasHeights()
	if layer {
		head = append(head, "z")
	}
	head = append(head, "flags")
	w.Write(head)
	f := func(x float64) string {
		if math.IsNaN(x) {
			return ""
		}
		return strconv.FormatFloat(x, 'g', 6, 64)
	}
	for _, rs := range r.Sources {
		s := rs.res
		row := []string{s.Name, s.Label, s.Best}
		for _, p := range s.Membership {
			row = append(row, strconv.FormatFloat(p, 'f', 4, 64))
		}
		row = append(row, f(s.Distance), f(s.DistanceLo), f(s.DistanceHi), f(s.R), f(s.Beta), f(s.InnerProb),
			f(s.U), f(s.USD), f(s.V), f(s.VSD), f(s.W), f(s.WSD), f(rs.KinematicNear), f(rs.KinematicFar))
		if layer {
			row = append(row, f(rs.Height))
		}
		row = append(row, strings.Join(rs.Flags, ";"))
		w.Write(row)
	}
	w.Flush()
	return b.Bytes()
}
