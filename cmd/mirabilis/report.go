package main

import (
	"flag"

	"github.com/mirabilis-astro/mirabilis/model/fit"
)

var reportCommand = &command{
	Name:  "report",
	Usage: "RUN_DIR... [--burn N] [--format text|json|csv] [--side-by-side | --coverage [--figure FILE]]",
	Short: "summarise one run, or merge several runs of one model",
	Long: `Report summarises the posterior of a run directory, or of several runs of the
same configuration and catalog merged (their walkers side by side; runs may differ
only in their [sampler] settings, such as the seed, and are refused, naming the
difference, otherwise). It reads the chains as they stand, so a run still going or
stopped early can be reported too.

For every parameter and derived quantity: the median, the 68% and 95% intervals,
mean and standard deviation, the autocorrelation time τ, the bulk and tail effective
sample sizes and split-R̂ (Vehtari et al. 2021), with every walker of every run
counted as one chain, so that runs stuck in different places raise R̂; and R̂ within
each run alone. A warning is printed when R̂ exceeds 1.01 or the chain after burn-in
is shorter than 50 τ.

For every catalog source: the columns of the run's sources.csv, and the kinematic
distances (nearest and farthest) at which the posterior median model predicts its
v_LSR, flagged "kinematic-conflict" when none lies within 3σ of the parallax's
distance (σ combining the parallax's error with the spread that the velocity's
error and the sources' dispersion σ_vir give the kinematic distance).

--burn N leaves out the first N kept rows of each chain (default: the
configuration's burn-in). --format json writes an object with the keys parameters
and derived (name → median, p16, p84, p2.5, p97.5, mean, sd, tau, ess_bulk,
ess_tail, rhat, rhat_within), sources, warnings and runs; --format csv writes the
per-source table.

--side-by-side summarises each run on its own and sets them side by side, one
column per run: for runs of different models, such as the variants of a batch
(mirabilis batch --variants), which cannot be merged. "mirabilis compare" then says
which model the catalog prefers.

--coverage reads the runs of a calibration set (mirabilis batch --mocks), each a
fit of a mock catalog with its true parameters in truth.json beside it, and prints
for every sampled parameter the share of mocks whose truth lies inside the 68% and
95% intervals, with binomial standard errors, and the rank of the truth among 99
posterior draws of each mock: uniform ranks mean calibrated fits (simulation-based
calibration, Talts et al. 2018). --figure FILE draws the rank histograms (PNG, SVG
or PDF by the extension).`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o reportOptions
		fs.IntVar(&o.burn, "burn", 0, "leave out the first `N` kept rows of each chain (0: the configuration's burn-in)")
		fs.StringVar(&o.format, "format", "text", "output `FORMAT`: text, json or csv")
		fs.BoolVar(&o.sideBySide, "side-by-side", false, "summarise each run on its own, one column per run (runs of different models)")
		fs.BoolVar(&o.coverage, "coverage", false, "calibration of a set of mock fits: interval coverage and rank statistics")
		fs.StringVar(&o.figure, "figure", "", "with --coverage, draw the rank histograms into `FILE`")
		return func(env *runEnv, args []string) error { return runReport(env, &o, args) }
	},
}

type reportOptions struct {
	burn       int
	format     string
	coverage   bool
	sideBySide bool
	figure     string
}

func runReport(env *runEnv, o *reportOptions, args []string) error {
	if len(args) == 0 {
		return usageErrorf("want at least one run directory")
	}
	if o.format != "text" && o.format != "json" && o.format != "csv" {
		return usageErrorf("--format %q: want text, json or csv", o.format)
	}
	if o.burn < 0 {
		return usageErrorf("--burn %d: want zero or more rows", o.burn)
	}
	if o.coverage && o.sideBySide {
		return usageErrorf("--coverage and --side-by-side exclude each other")
	}
	if o.coverage {
		return runCoverage(env, o, args)
	}
	if o.sideBySide {
		return runSideBySide(env, o, args)
	}
	if o.figure != "" {
		return usageErrorf("--figure goes with --coverage")
	}
	runs, err := openRuns(args)
	if err != nil {
		return err
	}
	defer closeRuns(runs)
	rep, err := fit.NewReport(runs, o.burn)
	if err != nil {
		return err
	}
	var out []byte
	switch o.format {
	case "json":
		out, err = fit.JSONIndent(rep)
	case "csv":
		out = rep.SourcesCSV()
	default:
		out = []byte(rep.Text())
	}
	if err != nil {
		return err
	}
	_, err = env.stdout.Write(out)
	return err
}

// openRuns opens run directories, checking that they fit one model.
func openRuns(dirs []string) ([]*fit.Run, error) {
	var runs []*fit.Run
	for _, d := range dirs {
		r, err := fit.OpenRun(d)
		if err != nil {
			closeRuns(runs)
			return nil, err
		}
		runs = append(runs, r)
	}
	if err := fit.SameModel(runs); err != nil {
		closeRuns(runs)
		return nil, err
	}
	return runs, nil
}

// closeRuns releases the runs' chain files.
func closeRuns(runs []*fit.Run) {
	for _, r := range runs {
		r.Close()
	}
}
