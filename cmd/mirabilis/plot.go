package main

import (
	"errors"
	"flag"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"

	"gonum.org/v1/plot/vg"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/plots"
)

// plotKinds are the figures plot draws, in the order its help lists them.
var plotKinds = []string{"map", "rotation", "pairs", "trace", "membership", "assign"}

var plotCommand = &command{
	Name:  "plot",
	Usage: "RUN_DIR... --kind map|rotation|pairs|trace|membership|assign [-o FILE] [--params a,b,c] [--sources NEW.csv] [--force]",
	Short: "redraw a figure of one run, or of several runs merged, without refitting",
	Long: `Plot draws one figure of a run directory, or of several runs of one model merged
(see "mirabilis report"), from the chains as they stand. The file's extension
chooses the format: .png, .svg or .pdf. Without -o the figure is written to
KIND.png in the current folder. An existing file is not replaced without --force.

Kinds:
  map         the Galaxy face-on at the posterior median: each arm's band (± its
              width) and, deeper and narrower, the 68% spread of its centre line
              over posterior draws; the catalog's sources coloured by membership;
              with a [selection], the longitudes of the plane the survey does not
              see shaded from the Sun and its completeness's half distance dashed;
              with --sources, new sources placed as assign places them
  rotation    the rotation curve with its 68% and 95% bands and the sources
  pairs       one- and two-dimensional marginals of the sampled parameters
              (--params a,b,c chooses them; default: the global parameters)
  trace       every walker's trace of every sampled parameter
  membership  each source's membership probabilities (compact beyond 300
              sources; "mirabilis report" lists them one by one)
  assign      the map with the new sources of --sources (required)`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o plotOptions
		fs.StringVar(&o.kind, "kind", "", "the figure, `KIND`: "+strings.Join(plotKinds, ", ")+" (required)")
		fs.StringVar(&o.out, "o", "", "write the figure to `FILE` (.png, .svg or .pdf; default KIND.png)")
		fs.StringVar(&o.params, "params", "", "for --kind pairs: the parameters to show, `a,b,c`")
		fs.StringVar(&o.sources, "sources", "", "`NEW.csv`: new sources to place on the map (see assign)")
		fs.BoolVar(&o.force, "force", false, "replace an existing file")
		return func(env *runEnv, args []string) error { return runPlot(env, &o, args) }
	},
}

type plotOptions struct {
	kind, out, params, sources string
	force                      bool
}

// mapDraws is the number of posterior draws behind the map's centre-line spreads and its
// new sources.
const mapDraws = 400

func runPlot(env *runEnv, o *plotOptions, args []string) error {
	if len(args) == 0 {
		return usageErrorf("want at least one run directory")
	}
	if !slices.Contains(plotKinds, o.kind) {
		return usageErrorf("--kind %q: want one of %s", o.kind, strings.Join(plotKinds, ", "))
	}
	if o.kind == "assign" && o.sources == "" {
		return usageErrorf("--kind assign needs --sources NEW.csv")
	}
	if o.params != "" && o.kind != "pairs" {
		return usageErrorf("--params applies to --kind pairs only")
	}
	out := o.out
	if out == "" {
		out = o.kind + ".png"
	}
	switch strings.ToLower(filepath.Ext(out)) {
	case ".png", ".svg", ".pdf":
	default:
		return usageErrorf("-o %s: the extension must be .png, .svg or .pdf", out)
	}
	if _, err := os.Stat(out); err == nil && !o.force {
		return fmt.Errorf("%s exists; use --force to replace it or -o to choose another file", out)
	} else if err != nil && !errors.Is(err, fs.ErrNotExist) {
		return err
	}
	var newCat *catalog.Catalog
	if o.sources != "" {
		var err error
		if newCat, err = catalog.ReadFile(o.sources); err != nil {
			return err
		}
	}
	runs, err := openRuns(args)
	if err != nil {
		return err
	}
	defer closeRuns(runs)
	run, err := fit.MergeRuns(runs)
	if err != nil {
		return err
	}
	sum, err := run.Summary(0)
	if err != nil {
		return err
	}
	in, err := newFigureInput(&fit.Outcome{Dir: run.Dir, Job: run.Job, Pilot: run.Pilot, Summary: sum, Result: &mcmc.Result{Chain: run.Chain}})
	if err != nil {
		return err
	}
	var fig plots.Figure
	var w, h vg.Length
	switch o.kind {
	case "map", "assign":
		fig, w, h, err = runMap(in, run, newCat)
	case "rotation":
		fig, w, h, err = rotationFigure(in)
	case "pairs":
		fig, w, h, err = pairsFigure(in, o.params)
	case "trace":
		fig, w, h, err = traceFigure(in)
	case "membership":
		fig, w, h, err = membershipFigure(in)
	}
	if err != nil {
		return err
	}
	if fig == nil {
		return fmt.Errorf("the run has nothing to show as --kind %s", o.kind)
	}
	if err := plots.Save(fig, out, w, h); err != nil {
		return err
	}
	fmt.Fprintf(env.stdout, "wrote %s\n", out)
	return nil
}

// runMap draws the map with the arms' centre-line spreads and any new sources, placed
// as assign places them.
func runMap(in *figureInput, run *fit.Run, newCat *catalog.Catalog) (plots.Figure, vg.Length, vg.Length, error) {
	d, err := mapData(in)
	if err != nil {
		return nil, 0, 0, err
	}
	draws := run.Draws(mapDraws, 0)
	for k, sp := range fit.ArmSpreads(run.Job, draws) {
		for i, b := range sp.Beta {
			d.Arms[k].CentreLo = append(d.Arms[k].CentreLo, plots.Polar{R: sp.Lo[i], Beta: b})
			d.Arms[k].CentreHi = append(d.Arms[k].CentreHi, plots.Polar{R: sp.Hi[i], Beta: b})
		}
	}
	if newCat != nil {
		res, err := fit.Assign(run.Job, draws, in.median, newCat, run.Job.Config.Sampler.Threads)
		if err != nil {
			return nil, 0, 0, err
		}
		srcs, err := model.NewSources(newCat, run.Job.Spec)
		if err != nil {
			return nil, 0, 0, err
		}
		R0 := in.median.Motion.R0()
		for i, a := range res {
			prob := make([]float64, len(a.Components()))
			for m, c := range a.Components() {
				prob[m] = a.Membership[c]
			}
			d.Assigned = append(d.Assigned, plots.MapSource{Name: a.Name, Prob: prob,
				At:   plots.Polar{R: a.R, Beta: a.Beta * math.Pi / 180},
				Near: inPlane(&srcs[i].Sight, R0, a.Distance.P16), Far: inPlane(&srcs[i].Sight, R0, a.Distance.P84)})
		}
		d.Title = fmt.Sprintf("New sources placed in the fitted model (%d posterior draws)", len(draws))
	}
	fig, err := plots.FaceOnMap(d)
	if err != nil {
		return nil, 0, 0, err
	}
	return fig, 9 * vg.Inch, 9 * vg.Inch, nil
}

// pairsFigure draws the pairs plot of the named sampled parameters, or of the global
// parameters when names is empty.
func pairsFigure(in *figureInput, names string) (plots.Figure, vg.Length, vg.Length, error) {
	if names == "" {
		return globalsTriangle(in)
	}
	c := in.chain()
	var cols []int
	for _, n := range strings.Split(names, ",") {
		n = strings.TrimSpace(n)
		j := slices.Index(c.Names, n)
		if j < 0 {
			return nil, 0, 0, fmt.Errorf("--params: %q is not a sampled parameter of the run (it has %s)", n, strings.Join(c.Names, ", "))
		}
		cols = append(cols, j)
	}
	arms := armNames(in.arms)
	return in.triangle(fmt.Sprintf("%d parameters after burn-in", len(cols)), cols, func(n string) string { return paramLabel(n, arms) })
}
