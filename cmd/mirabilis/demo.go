package main

import (
	_ "embed"
	"flag"
	"fmt"
	"path/filepath"
	"text/tabwriter"
	"time"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/model/mock"
)

//go:embed demo/galaxy.toml
var demoGalaxy []byte

//go:embed demo/demo-fit.toml
var demoFit []byte

var demoCommand = &command{
	Name:  "demo",
	Usage: "[--out DIR] [--threads N] [--steps N] [--seed N]",
	Short: "run the whole job on the built-in demo galaxy",
	Long: `Demo runs the whole job with no input of yours. It writes the built-in demo galaxy —
an invented four-armed spiral with arms named Corvid, Lantern, Tamarisk and Halcyon —
and a fit configuration into DIR, draws a mock catalog of 150 sources from the galaxy
as an invented survey sees it — the sky north of declination −30°, with sources
beyond about 12 kpc found ever less often ("mirabilis simulate") — fits it with that
selection ("mirabilis fit"), prints the posterior summary next to the true values
(the fractions are the Galaxy's; the catalog's shares are in sources-truth.csv), and
writes the figures.

DIR (default "mirabilis-demo") then holds galaxy.toml (the model with its true
values and the mock survey), demo-fit.toml (the fit's configuration, priors and
sampler settings), sources.csv and sources-truth.csv (the catalog and what the
catalog does not say), and run/ (the run directory, see "mirabilis help fit").
Running the demo again replaces that run. Edit demo-fit.toml and run
"mirabilis fit DIR/demo-fit.toml --force" to try other settings.`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o demoOptions
		fs.StringVar(&o.dir, "out", "mirabilis-demo", "`DIR` for the demo's files")
		fs.IntVar(&o.threads, "threads", 0, "`N` goroutines evaluating the likelihood (0 = all cores)")
		fs.IntVar(&o.steps, "steps", 0, "total chain length `N` (default: the demo configuration's)")
		fs.Var(&o.seed, "seed", "`N`, the seed of the sampler (default: the demo configuration's)")
		return func(env *runEnv, args []string) error { return runDemo(env, &o, args) }
	},
}

type demoOptions struct {
	dir            string
	threads, steps int
	seed           seedValue
}

func runDemo(env *runEnv, o *demoOptions, args []string) error {
	if len(args) > 0 {
		return usageErrorf("unexpected argument %q", args[0])
	}
	began := time.Now()
	if o.threads < 0 || o.steps < 0 {
		return usageErrorf("--threads and --steps must not be negative")
	}
	dir := o.dir
	if err := atomicfile.MkdirAll(dir); err != nil {
		return err
	}
	galaxyPath := filepath.Join(dir, "galaxy.toml")
	fitPath := filepath.Join(dir, "demo-fit.toml")
	for _, f := range []struct {
		path string
		data []byte
	}{{galaxyPath, demoGalaxy}, {fitPath, demoFit}} {
		if err := atomicfile.Write(f.path, f.data); err != nil {
			return err
		}
	}
	m, err := mock.Load(galaxyPath)
	if err != nil {
		return err
	}
	catPath := filepath.Join(dir, "sources.csv")
	n, err := simulateTo(m, nil, catPath, filepath.Join(dir, "sources-truth.csv"), env)
	if err != nil {
		return err
	}
	fmt.Fprintf(env.stderr, "Drew %d mock sources from the demo galaxy into %s\n", n, catPath)
	cfg, err := config.Load(fitPath)
	if err != nil {
		return err
	}
	opts := fit.Options{Force: true, Seed: o.seed.get(), Threads: o.threads, Steps: o.steps}
	out, err := fitAndReport(env, cfg, opts)
	if err != nil {
		return err
	}
	if out.Summary == nil {
		return fmt.Errorf("the demo fit stopped before its end")
	}
	fmt.Fprintln(env.stdout, "\nThe demo galaxy's true values against the posterior:")
	tw := tabwriter.NewWriter(env.stdout, 0, 0, 2, ' ', tabwriter.AlignRight)
	fmt.Fprintln(tw, "parameter\ttruth\tmedian\t68% interval\twithin 95%\t")
	for _, q := range out.Summary.Params {
		t, ok := m.Truth[q.Name]
		if !ok {
			continue
		}
		in := "no"
		if t >= q.Lo95 && t <= q.Hi95 {
			in = "yes"
		}
		fmt.Fprintf(tw, "%s\t%.4g\t%.4g\t[%.4g, %.4g]\t%s\t\n", q.Name, t, q.Median, q.Lo68, q.Hi68, in)
	}
	tw.Flush()
	fmt.Fprintf(env.stdout, "\nDemo finished in %s.\n", time.Since(began).Round(time.Second))
	return nil
}
