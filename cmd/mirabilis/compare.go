package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

var compareCommand = &command{
	Name:  "compare",
	Usage: "RUN_A RUN_B [RUN_C...] [--draws N] [--burn N] [--format text|json] [--pointwise FILE.csv] [--force] [--threads N]",
	Short: "rank models fitted to one catalog by leave-one-out cross-validation",
	Long: `Compare ranks models fitted to the same catalog by how well each predicts a
source it was not fitted to: Pareto-smoothed importance-sampling leave-one-out
cross-validation (PSIS-LOO; Vehtari, Gelman & Gabry 2017; Vehtari et al. 2024).
Use it to decide between models: more or fewer arms, kinks or none, another
rotation curve or error model.

Each RUN is a run directory made by "mirabilis fit". Runs of the same
configuration (differing only in their [sampler] settings, such as the seed) are
merged into one model, their walkers side by side.

For every model, --draws posterior draws (default 1000) are taken, spread evenly
over the chain after burn-in with each walker's draws at least one
autocorrelation time apart (fewer when the chain is too short for that), and
every source's log-likelihood ln L_i is evaluated at every draw on the run's own
distance quadratures. From these come elpd_loo (the expected log predictive
density, summed over sources; higher is better) with its standard error, p_loo
(the effective number of parameters), looic = -2 elpd_loo, and each source's
Pareto k̂. As the draws are about independent, the relative efficiency is taken
as 1. The table ranks the models by elpd_loo and gives each one's difference
from the best with the standard error of the difference, paired over sources,
and a reading in words. WAIC is shown beside LOO, as the less reliable of the
two. Sources whose k̂ is above the threshold (0.7, or less with fewer than 2200
draws) are named: their estimates are unreliable.

The runs must fit the same catalog (the same file content) and the same data:
the same distance mode (distance_prior) and every source tied to an arm in all
models or in none. Sources excluded from any run are left out of all models.

--format json writes the models (ranked, with elpd_loo, p_loo, looic, WAIC,
elpd_diff, the sources with high k̂) and, for every source, its elpd_loo,
Pareto k̂ and elpd difference from the best model, per model.

--pointwise FILE.csv writes each model's matrix of ln L_i, one row per draw and
one column per source, named: FILE.csv with "-1", "-2", ... added before ".csv",
numbered in the order the models appear on the command line. In R,
  loo(as.matrix(read.csv("FILE-1.csv", comment.char = "#", check.names = FALSE)), r_eff = NA)
gives the same elpd_loo. Existing files are not replaced without --force.`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o compareOptions
		fs.IntVar(&o.opts.Draws, "draws", fit.DefaultCompareDraws, "`N` posterior draws per model")
		fs.IntVar(&o.opts.Burn, "burn", 0, "leave out the first `N` kept rows of each chain (0: the configuration's burn-in)")
		fs.IntVar(&o.opts.Threads, "threads", 0, "`N` goroutines evaluating the likelihood (0: all cores)")
		fs.StringVar(&o.format, "format", "text", "output `FORMAT`: text or json")
		fs.StringVar(&o.pointwise, "pointwise", "", "write each model's pointwise log-likelihoods to `FILE.csv` (numbered -1, -2, ...)")
		fs.BoolVar(&o.force, "force", false, "replace --pointwise files that exist")
		return func(env *runEnv, args []string) error { return runCompare(env, &o, args) }
	},
}

type compareOptions struct {
	opts      fit.CompareOptions
	format    string
	pointwise string
	force     bool
}

func runCompare(env *runEnv, o *compareOptions, args []string) error {
	if len(args) < 2 {
		return usageErrorf("want at least two run directories, got %d", len(args))
	}
	if o.format != "text" && o.format != "json" {
		return usageErrorf("--format %q: want text or json", o.format)
	}
	if o.opts.Draws < 2 {
		return usageErrorf("--draws %d: want at least 2 draws (1000 is usual)", o.opts.Draws)
	}
	if o.opts.Burn < 0 || o.opts.Threads < 0 {
		return usageErrorf("--burn and --threads must not be negative")
	}
	var runs []*fit.Run
	for _, d := range args {
		r, err := fit.OpenRun(d)
		if err != nil {
			return err
		}
		runs = append(runs, r)
	}
	groups := fit.GroupRuns(runs)
	if len(groups) < 2 {
		return fmt.Errorf("the runs %s all fit the same model: compare needs runs of at least two different configurations", strings.Join(args, ", "))
	}
	var files []string
	if o.pointwise != "" {
		files = pointwiseFiles(o.pointwise, len(groups))
		if !o.force {
			for _, f := range files {
				if _, err := os.Stat(f); err == nil {
					return fmt.Errorf("%s already exists; --force replaces it, or give --pointwise another name", f)
				}
			}
		}
	}
	fmt.Fprintf(env.stderr, "evaluating every source's likelihood at up to %d posterior draws of %d models...\n", o.opts.Draws, len(groups))
	cmp, err := fit.Compare(groups, o.opts)
	if err != nil {
		return err
	}
	for i, grp := range groups {
		if files == nil {
			break
		}
		label := grp[0].Dir
		for _, m := range cmp.Models {
			if m.Runs[0] == label {
				if err := atomicfile.WriteWith(files[i], m.Pointwise.WriteCSV); err != nil {
					return err
				}
				fmt.Fprintf(env.stderr, "wrote the pointwise log-likelihoods of %s to %s\n", m.Label, files[i])
			}
		}
	}
	if o.format == "json" {
		data, err := cmp.JSON()
		if err != nil {
			return err
		}
		_, err = env.stdout.Write(data)
		return err
	}
	_, err = fmt.Fprint(env.stdout, cmp.Text())
	return err
}

// pointwiseFiles returns the --pointwise file of each of n models: the name
// with "-1", "-2", ... added before its extension.
func pointwiseFiles(name string, n int) []string {
	ext := filepath.Ext(name)
	if ext == "" {
		ext = ".csv"
	}
	stem := strings.TrimSuffix(name, filepath.Ext(name))
	out := make([]string, n)
	for i := range out {
		out[i] = fmt.Sprintf("%s-%d%s", stem, i+1, ext)
	}
	return out
}
