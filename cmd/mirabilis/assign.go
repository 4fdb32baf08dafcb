package main

import (
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"strings"

	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

var assignCommand = &command{
	Name:  "assign",
	Usage: `RUN_DIR (--source "l=…,b=…,parallax=…,parallax_err=…" | --catalog NEW.csv) [--draws N] [--format text|json]`,
	Short: "say which arm new sources belong to, under a finished fit",
	Long: `Assign places new sources in the model a run has fitted, without refitting: for
each source, its membership probability for the field and every arm, averaged over
posterior draws of the run (spread evenly over the chain after burn-in), with its
distance integrated out exactly as the fit does (quadrature panels are laid out for
the new source at a dozen of the draws, to the fit's tolerance). Whatever proper
motions and velocities the source has are used.

Give one source with --source, as comma-separated KEY=VALUE fields whose keys are
catalog columns (see "mirabilis help catalog"), for example

	--source "l=30.2,b=0.1,parallax=0.21,parallax_err=0.02,vlsr=84,vlsr_err=5"

or many with --catalog NEW.csv (any catalog; "-" reads standard input).

For each source assign prints the probabilities with their Monte Carlo errors (the
spread over the draws over √N), the most probable component, the distance posterior
(median and 68% interval) beside 1/parallax, the arm whose centre line passes
closest at that distance with the offset across it in kpc and in arm widths
(positive outside the centre line), and the Galactocentric radius R and azimuth β,
under the posterior median model. A source with a negative parallax, without
kinematics, or beyond every arm's azimuth range still gets an answer, with a note.

With --format json the output is an array of objects with the keys name,
membership (component → probability), membership_error, best, distance (median,
p16, p84, in kpc), parallax_distance, nearest_arm, offset_kpc, offset_widths, R
(kpc), beta (deg) and notes; a number that does not exist is null.`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o assignOptions
		fs.StringVar(&o.source, "source", "", "one new source as `KEY=VALUE,…` catalog fields")
		fs.StringVar(&o.catalog, "catalog", "", "`NEW.csv`: a catalog of new sources (- for standard input)")
		fs.IntVar(&o.draws, "draws", 400, "posterior draws to average over, `N`")
		fs.StringVar(&o.format, "format", "text", "output `FORMAT`: text or json")
		return func(env *runEnv, args []string) error { return runAssign(env, &o, args) }
	},
}

type assignOptions struct {
	source, catalog, format string
	draws                   int
}

func runAssign(env *runEnv, o *assignOptions, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one run directory, got %d arguments", len(args))
	}
	if (o.source == "") == (o.catalog == "") {
		return usageErrorf("give the new sources with either --source or --catalog")
	}
	if o.format != "text" && o.format != "json" {
		return usageErrorf("--format %q: want text or json", o.format)
	}
	if o.draws < 1 {
		return usageErrorf("--draws %d: want at least 1", o.draws)
	}
	var cat *catalog.Catalog
	var err error
	switch {
	case o.source != "":
		cat, err = fit.ParseSource(o.source)
	case o.catalog == "-":
		cat, err = catalog.Read(os.Stdin, "standard input")
	default:
		cat, err = catalog.ReadFile(o.catalog)
	}
	if err != nil {
		return err
	}
	run, err := fit.OpenRun(args[0])
	if err != nil {
		return err
	}
	defer run.Close()
	draws := run.Draws(o.draws, 0)
	median, err := fit.MedianParams(run.Job, draws)
	if err != nil {
		return fmt.Errorf("run %s: %w", args[0], err)
	}
	res, err := fit.Assign(run.Job, draws, median, cat, run.Job.Config.Sampler.Threads)
	if err != nil {
		return err
	}
	if o.format == "json" {
		data, err := fit.JSONIndent(res)
		if err != nil {
			return err
		}
		_, err = env.stdout.Write(data)
		return err
	}
	burn := run.Burn(0)
	fmt.Fprintf(env.stdout, "Averaged over %d posterior draws of the run in %s (steps %d–%d, after a burn-in of %d).\n",
		len(draws), args[0], run.Chain.Step(burn), run.Chain.Step(run.Chain.Len()-1), burn)
	for _, a := range res {
		writeAssignment(env.stdout, &a)
	}
	return nil
}

// writeAssignment prints one source's assignment for reading.
func writeAssignment(w io.Writer, a *fit.Assignment) {
	fmt.Fprintf(w, "\n%s\n", a.Name)
	fmt.Fprintf(w, "  most probable   %s (%.3f)\n", a.Best, a.Membership[a.Best])
	var parts []string
	for _, c := range a.Components() {
		parts = append(parts, fmt.Sprintf("%s %s ± %s", c, prob(a.Membership[c]), prob(a.MembershipError[c])))
	}
	fmt.Fprintf(w, "  membership      %s\n", strings.Join(parts, ", "))
	plx := "parallax not positive"
	if !math.IsNaN(a.ParallaxDistance) {
		plx = fmt.Sprintf("1/parallax %.2f kpc", a.ParallaxDistance)
	}
	fmt.Fprintf(w, "  distance        %.2f kpc (68%%: %.2f–%.2f); %s\n", a.Distance.Median, a.Distance.P16, a.Distance.P84, plx)
	if a.NearestArm != "" {
		side := "outside"
		if a.OffsetKpc < 0 {
			side = "inside"
		}
		fmt.Fprintf(w, "  nearest arm     %s, %.2f kpc %s its centre line (%.1f widths)\n", a.NearestArm, math.Abs(a.OffsetKpc), side, math.Abs(a.OffsetWidths))
	}
	fmt.Fprintf(w, "  position        R = %.2f kpc, β = %.1f°\n", a.R, a.Beta)
	for _, n := range a.Notes {
		fmt.Fprintf(w, "  note            %s\n", n)
	}
}

// prob formats a probability with three decimals, or in exponent form when smaller.
func prob(p float64) string {
	if p != 0 && p < 0.0005 {
		return fmt.Sprintf("%.0e", p)
	}
	return fmt.Sprintf("%.3f", p)
}
