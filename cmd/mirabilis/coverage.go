package main

import (
	"fmt"

	"gonum.org/v1/plot/vg"

	"github.com/mirabilis-astro/mirabilis/model/batch"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/plots"
)

// runSideBySide summarises runs of different models side by side.
func runSideBySide(env *runEnv, o *reportOptions, dirs []string) error {
	if o.format == "csv" {
		return usageErrorf("--side-by-side writes text or json")
	}
	runs, err := openEach(dirs)
	defer closeAll(runs)
	if err != nil {
		return err
	}
	sbs, err := batch.NewSideBySide(runs, o.burn)
	if err != nil {
		return err
	}
	if o.format == "json" {
		out, err := fit.JSONIndent(sbs)
		if err != nil {
			return err
		}
		_, err = env.stdout.Write(out)
		return err
	}
	_, err = fmt.Fprint(env.stdout, sbs.Text())
	return err
}

// openEach opens run directories without asking that they fit one model.
func openEach(dirs []string) ([]*fit.Run, error) {
	var runs []*fit.Run
	for _, d := range dirs {
		r, err := fit.OpenRun(d)
		if err != nil {
			return runs, err
		}
		runs = append(runs, r)
	}
	return runs, nil
}

func closeAll(runs []*fit.Run) {
	for _, r := range runs {
		r.Close()
	}
}

// runCoverage reports the calibration of a set of mock fits.
func runCoverage(env *runEnv, o *reportOptions, dirs []string) error {
	if o.format == "csv" {
		return usageErrorf("--coverage writes text or json")
	}
	runs, err := openEach(dirs)
	defer closeAll(runs)
	if err != nil {
		return err
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
