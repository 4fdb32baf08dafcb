package main

import (
	"flag"
	"fmt"
	"os"
	"path/filepath"

	"github.com/mirabilis-astro/mirabilis/model/batch"
)

var batchCommand = &command{
	Name:  "batch",
	Usage: "CONFIG.toml [--chains N | --variants VARIANTS.toml | --mocks N --survey SURVEY.toml] [--out DIR] [--time HH:MM:SS] [--cpus N] [--partition P] [--warning DURATION] [--force]",
	Short: "write a Slurm job array of fits: chains, variants of a model, or a calibration set",
	Long: `Batch plans many fits of one model as a Slurm job array, one array task per run
directory, and writes a plain, commented batch script that you can read, edit and
submit with sbatch. Nothing is submitted.

  --chains N                N independent chains of CONFIG.toml, with seeds s, s+1, …
                            (s: the configuration's seed); merge them afterwards with
                            "mirabilis report DIR/chain-*"
  --variants VARIANTS.toml  one run per variant, each changing some settings of
                            CONFIG.toml (see below); set them side by side
                            with "mirabilis report --side-by-side DIR/variant-*"
                            and rank them with "mirabilis compare"
  --mocks N --survey SURVEY.toml
                            a calibration set: task i draws true parameters from
                            CONFIG.toml's priors (seed s+i), simulates a mock
                            catalog with the [survey] table of SURVEY.toml (see
                            "mirabilis help simulate"), and fits it with
                            CONFIG.toml; then "mirabilis report --coverage
                            DIR/mock-*/run" says how often the truth lies in the
                            68% and 95% intervals, with the rank statistics of
                            simulation-based calibration

Everything goes to the batch folder (--out, by default CONFIG-chains or
CONFIG-variants or CONFIG-mocks next to CONFIG.toml): job.sh, each task's run directory, the
variants' configurations under configs/, and Slurm's output files. Each task runs
"mirabilis fit" on its run directory with as many threads as --cpus, resuming the
run when it exists. Slurm is asked to signal each task --warning before its time
limit; the fit then finishes its step, writes its checkpoint and exits with status
75, and the task requeues itself, so a long fit runs through as many time slots as
it needs. A task can be resubmitted at any time: it continues where it stopped.

The script runs the mirabilis program that wrote it (its absolute path is written
into the script): the run directories and the program must be on a filesystem that
the compute nodes share.

` + batch.VariantsHelp,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o batchOptions
		fs.IntVar(&o.chains, "chains", 0, "`N` independent chains of the configuration")
		fs.StringVar(&o.variants, "variants", "", "the variants file `VARIANTS.toml`: one run per variant")
		fs.IntVar(&o.mocks, "mocks", 0, "`N` mock catalogs drawn from the priors and fitted: a calibration set")
		fs.StringVar(&o.survey, "survey", "", "`SURVEY.toml`, whose [survey] table the mocks are drawn with")
		fs.StringVar(&o.out, "out", "", "the batch folder `DIR` (default: next to CONFIG.toml)")
		fs.StringVar(&o.slurm.Time, "time", "01:00:00", "each task's time limit `HH:MM:SS` (or D-HH:MM:SS)")
		fs.IntVar(&o.slurm.CPUs, "cpus", 1, "`N` cores per task, and the fit's threads")
		fs.StringVar(&o.slurm.Partition, "partition", "", "the Slurm partition `P` (default: the cluster's)")
		fs.DurationVar(&o.slurm.Warning, "warning", 0, "how long before the time limit the fit is told to stop, as a `DURATION` (default 5m, at most a third of --time)")
		fs.BoolVar(&o.force, "force", false, "write into a batch folder that is not empty")
		return func(env *runEnv, args []string) error { return runBatch(env, &o, args) }
	},
}

type batchOptions struct {
	chains   int
	variants string
	mocks    int
	survey   string
	out      string
	slurm    batch.Slurm
	force    bool
}

func runBatch(env *runEnv, o *batchOptions, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one configuration file, got %d arguments", len(args))
	}
	kinds := 0
	for _, given := range []bool{o.chains != 0, o.variants != "", o.mocks != 0} {
		if given {
			kinds++
		}
	}
	if kinds != 1 {
		return usageErrorf("give one of --chains N, --variants FILE or --mocks N")
	}
	if o.chains < 0 || o.mocks < 0 {
		return usageErrorf("--chains and --mocks want a positive number")
	}
	if (o.mocks > 0) != (o.survey != "") {
		return usageErrorf("--mocks N and --survey SURVEY.toml go together")
	}
	if o.slurm.CPUs < 1 {
		return usageErrorf("--cpus %d: want a positive number", o.slurm.CPUs)
	}
	if o.slurm.Program == "" {
		exe, err := os.Executable()
		if err != nil {
			return fmt.Errorf("finding the mirabilis program: %w", err)
		}
		if exe, err = filepath.EvalSymlinks(exe); err != nil {
			return fmt.Errorf("finding the mirabilis program: %w", err)
		}
		o.slurm.Program = exe
	}
	var plan *batch.Plan
	var err error
	switch {
	case o.chains > 0:
		plan, err = batch.NewChains(args[0], o.out, o.chains)
	case o.mocks > 0:
		var warning string
		plan, warning, err = batch.NewMocks(args[0], o.survey, o.out, o.mocks)
		if warning != "" {
			fmt.Fprintf(env.stderr, "mirabilis batch: warning: %s\n", warning)
		}
	default:
		plan, err = batch.NewVariants(args[0], o.variants, o.out)
	}
	if err != nil {
		return err
	}
	if err := plan.Write(o.slurm, o.force); err != nil {
		return err
	}
	script := filepath.Join(plan.Dir, batch.ScriptName)
	fmt.Fprintf(env.stdout, "Wrote %s: %d array tasks, %s each on %d core(s), run directories under %s.\n",
		script, len(plan.Tasks), o.slurm.Time, o.slurm.CPUs, plan.Dir)
	fmt.Fprintf(env.stdout, "Submit it with\n\tsbatch %s\n", script)
	return nil
}
