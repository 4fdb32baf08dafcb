package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"time"

	"golang.org/x/term"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

var fitCommand = &command{
	Name:  "fit",
	Usage: "CONFIG.toml [--out DIR] [--seed N] [--threads N] [--steps N] [--resume] [--force] [--time DURATION]",
	Short: "fit the joint model to a catalog",
	Long: `Fit reads the run configuration CONFIG.toml (see "mirabilis help config") and the
catalog it names, checks both completely, and then fits the joint model — spiral arms,
rotation curve, the Sun's motion, the sources' mean motion and every source's arm
membership, with each source's distance integrated out — by sampling the posterior
with an affine-invariant ensemble sampler.

First each source's distance quadrature is laid out at pilot parameter sets and the
maximum a posteriori point is searched for, within a budget of evaluations (the log
says when the search stops there, at the best point found); then the walkers start
around it. Progress is
shown on the terminal (step, acceptance, autocorrelation time, time left), as plain
lines when the output is not a terminal.

Everything goes to the run directory (the configuration's output, or --out):
  config.toml     the resolved configuration, every default written out; it can be
                  given to fit as it is
  run.json        the state of the run, the step of its last checkpoint, and the
                  hashes of its configuration and catalog
  run.lock        names the fit working in the directory (host, process, start)
  pilot.json      the maximum a posteriori point and the quadrature statistics
  chain.npy       the chain, as a NumPy array of shape (steps, walkers) with the
                  fields step, walker, log_density, then one per sampled
                  coordinate (free parameters; stick_k for the membership fractions)
  checkpoint.bin  the sampler's state and the quadratures, for --resume
  log.txt         what the run reported
  when the run ends:
  summary.txt     parameters and derived quantities (median, 68% and 95% intervals,
                  MAP, autocorrelation time, effective sample size), diagnostics
  summary.json    the same for programs, with the per-source results
  samples.csv     posterior samples after burn-in of every parameter, membership
                  fraction and derived quantity (at most 20000 rows)
  sources.csv     each source's membership probabilities, distance (median and
                  68% interval), Galactocentric position and peculiar motion
  figures/        face-on map, rotation curve, pairs plots, traces, memberships

A run directory holding a finished run is not overwritten without --force. A run
that was stopped (Ctrl-C, --time, a killed job) continues with --resume exactly as
if it had never stopped; --steps N is the chain's total length, so a run stopped
at step 17 and resumed with --steps 40 ends exactly as a run of 40 would. Resuming
is refused if the configuration or the catalog changed.

SIGINT (Ctrl-C), SIGTERM and SIGUSR1 (which sbatch --signal can send before a job's
time limit) stop the run after the step in flight, with its checkpoint and chain
written; a second signal stops it at once, keeping the last checkpoint. Even a run
killed outright (kill -9, a node failure) continues exactly from its last checkpoint.

Only one fit works in a run directory at a time: another is refused, naming the
host, process and start time of the one at work. The lock of a fit that died on
this host is taken over; one left by a fit on another host is not, since that fit
may still run: delete run.lock in the run directory once it has surely stopped.

Exit status: 0 when the run finished, 75 when it stopped early (a signal or --time)
and continues with --resume (a job script requeues on 75), 1 on failure, 2 for a
mistake on the command line.

The same seed gives the same chain, whatever the number of threads.`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o fitFlags
		fs.StringVar(&o.opts.Out, "out", "", "run directory `DIR` (default: the configuration's output)")
		fs.Var(&o.seed, "seed", "`N`, the seed of the random streams (default: the configuration's)")
		fs.IntVar(&o.opts.Threads, "threads", 0, "`N` goroutines evaluating the likelihood (default: the configuration's, 0 = all cores)")
		fs.IntVar(&o.opts.Steps, "steps", 0, "total chain length `N` (default: the configuration's)")
		fs.BoolVar(&o.opts.Resume, "resume", false, "continue the stopped run in the run directory")
		fs.BoolVar(&o.opts.Force, "force", false, "replace a run directory that holds a run")
		fs.DurationVar(&o.opts.MaxDuration, "time", 0, "stop cleanly after `DURATION` (e.g. 2h30m), leaving a run to --resume")
		return func(env *runEnv, args []string) error { return runFit(env, &o, args) }
	},
}

// fitFlags holds the flags of fit.
type fitFlags struct {
	opts fit.Options
	seed seedValue
}

// options checks the flags and returns them as the fit's options.
func (f *fitFlags) options() (fit.Options, error) {
	o := f.opts
	o.Seed = f.seed.get()
	if o.Threads < 0 || o.Steps < 0 {
		return o, usageErrorf("--threads and --steps must not be negative")
	}
	if o.Resume && o.Force {
		return o, usageErrorf("--resume and --force exclude each other")
	}
	if o.MaxDuration < 0 {
		return o, usageErrorf("--time %s: must not be negative", o.MaxDuration)
	}
	return o, nil
}

func runFit(env *runEnv, f *fitFlags, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one configuration file, got %d arguments", len(args))
	}
	opts, err := f.options()
	if err != nil {
		return err
	}
	cfg, err := config.Load(args[0])
	if err != nil {
		return err
	}
	out, err := fitAndReport(env, cfg, opts)
	if errors.Is(err, context.Canceled) {
		fmt.Fprintf(env.stderr, "mirabilis fit: stopped before sampling began; continue with\n\tmirabilis fit %s --resume --out %s\n", args[0], cfg.Output)
		return exitError{exitStopped}
	}
	if err != nil {
		return err
	}
	if out.Summary == nil {
		fmt.Fprintf(env.stdout, "The run stopped at step %d; continue it with\n\tmirabilis fit %s --resume --out %s\n", out.Result.Step, args[0], out.Dir)
		return exitError{exitStopped}
	}
	return nil
}

// fitAndReport runs a fit with progress on stderr, then writes the figures and prints the
// summary.
func fitAndReport(env *runEnv, cfg *config.Config, opts fit.Options) (*fit.Outcome, error) {
	pr := newProgress(env.stderr)
	opts.Progress = pr.update
	opts.Log = pr
	out, err := fit.Fit(env.ctx, cfg, opts)
	pr.finish()
	if errors.Is(err, context.Canceled) {
		return nil, fmt.Errorf("interrupted before sampling began; the run in %s continues with --resume: %w", cfg.Output, err)
	}
	if err != nil {
		return nil, err
	}
	if out.Summary == nil {
		return out, nil
	}
	figs, err := writeFigures(out)
	if err != nil {
		fmt.Fprintf(env.stderr, "warning: figures: %v\n", err)
	}
	fmt.Fprintln(env.stdout, out.Summary.Text())
	fmt.Fprintf(env.stdout, "Run directory: %s\n", out.Dir)
	if len(figs) > 0 {
		fmt.Fprintf(env.stdout, "Figures:\n")
		for _, f := range figs {
			fmt.Fprintf(env.stdout, "  %s\n", f)
		}
	}
	return out, nil
}

// progress renders the sampler's progress: one line redrawn in place on a terminal, a
// line every few seconds otherwise. It also passes log messages through, clearing the
// progress line first.
type progress struct {
	w        io.Writer
	tty      bool
	last     time.Time
	drawn    bool
	lastLine string
}

func newProgress(w io.Writer) *progress {
	p := &progress{w: w}
	if f, ok := w.(*os.File); ok && term.IsTerminal(int(f.Fd())) {
		p.tty = true
	}
	return p
}

func (p *progress) Write(b []byte) (int, error) {
	p.clear()
	return p.w.Write(b)
}

func (p *progress) clear() {
	if p.tty && p.drawn {
		fmt.Fprint(p.w, "\r\033[K")
		p.drawn = false
	}
}

func (p *progress) update(pg mcmc.Progress) {
	tau := "τ –"
	if !math.IsNaN(pg.Tau) {
		tau = fmt.Sprintf("τ %.0f steps = %.0f evaluations", pg.Tau, pg.TauEvaluations)
	}
	eta := ""
	if pg.ETA >= 0 {
		eta = " · left " + pg.ETA.Round(time.Second).String()
	}
	total := ""
	if pg.Steps > 0 {
		total = fmt.Sprintf("/%d", pg.Steps)
	}
	line := fmt.Sprintf("step %d%s · acceptance %.2f · %s · %d evaluations · %.1f steps/s%s",
		pg.Step, total, pg.Acceptance, tau, pg.Evaluations, pg.StepsPerSecond, eta)
	p.lastLine = line
	if p.tty {
		fmt.Fprint(p.w, "\r\033[K"+line)
		p.drawn = true
		return
	}
	if pg.Done || time.Since(p.last) > 10*time.Second {
		fmt.Fprintln(p.w, line)
		p.last = time.Now()
	}
}

func (p *progress) finish() {
	if p.tty && p.drawn {
		fmt.Fprintln(p.w)
		p.drawn = false
	}
}
