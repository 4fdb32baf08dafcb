package main

import (
	"fmt"

	"gonum.org/v1/plot/vg"

	"github.com/mirabilis-astro/mirabilis/model/batch"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/plots"
)

// runCoverage reports the calibration of a set of mock fits.
func runCoverage(env *runEnv, o *reportOptions, dirs []string) error {
	if o.format == "csv" {
		return usageErrorf("--coverage writes text or json")
	}
	var runs []*fit.Run
	defer func() {
		for _, r := range runs {
			r.Close()
		}
	}()
	for _, d := range dirs {
		r, err := fit.OpenRun(d)
		if err != nil {
			return err
		}
		runs = append(runs, r)
	}
	cov, err := batch.NewCoverage(runs, o.burn)
	if err != nil {
		return err
	}
	if o.figure != "" {
		hist := make([]plots.RankHistogram, len(cov.Rows))
		for i, r := range cov.Rows {
			hist[i] = plots.RankHistogram{Name: r.Name, Counts: r.Histogram}
		}
		fig := plots.RankHistograms(hist, cov.RankDraws)
		cols, rows := plots.RankGrid(len(hist))
		if err := plots.Save(fig, o.figure, vg.Length(cols)*2.2*vg.Inch, vg.Length(rows)*1.7*vg.Inch); err != nil {
			return err
		}
		fmt.Fprintf(env.stderr, "rank histograms: %s\n", o.figure)
	}
	if o.format == "json" {
		out, err := fit.JSONIndent(cov)
		if err != nil {
			return err
		}
		_, err = env.stdout.Write(out)
		return err
	}
	_, err = fmt.Fprint(env.stdout, cov.Text())
	return err
}
