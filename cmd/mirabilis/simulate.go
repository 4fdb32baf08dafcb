package main

import (
	"bytes"
	"flag"
	"fmt"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/model/mock"
)

func init() {
	register(&command{
		Name:  "simulate",
		Usage: "MODEL.toml [--seed N] [-o CATALOG.csv] [--truth TRUTH.csv]",
		Short: "draw a mock catalog from a model with known parameters",
		Long: `Simulate draws a mock catalog from the model described in MODEL.toml: a run
configuration (see "mirabilis help config") whose parameter priors hold the true
values — write them as fixed(v); a prior that is not fixed contributes its median —
and one more table, [survey], which says how many sources to draw, where the survey
can see and how well it measures:

  [survey]
  sources = 150                  number of sources
  seed = 7                       seed of the draws (--seed replaces it)
  declination_range = [-30, 90]  deg: the part of the sky the survey sees
  max_distance = 16              kpc: farther sources are too faint
  min_distance = 0.3             kpc
  fractions = { field = 0.15 }   shares of the field and of arms by name;
                                 arms not named share the rest equally
  height = 0.03                  kpc: Gaussian thickness of the source disk
  parallax_error = [0.008, 0.004]    mas: σϖ = a + b·d, d in kpc
  proper_motion_error = [0.03, 0.02] mas/yr: σμ = a + b·d
  velocity_error = 3             km/s
  labelled = 0.1                 share of arm sources written with their arm
  galactic_share = 0.0           share written in l, b (else ra, dec)
  missing_share = 0.05           share with one kinematic term left blank

Arm sources are spread uniformly in azimuth over each arm's range and as a
Gaussian across it, field sources follow the exponential disk; every source moves
with the model's rotation and mean peculiar motion plus the intrinsic scatter
(sigma_vir, and the bar's inside R_inner). The catalog goes to -o (default: the
configuration's catalog path; "-" is standard output), the true distances and
memberships to --truth (default: the catalog's name with "-truth" added).`,
		SetFlags: func(fs *flag.FlagSet) {
			fs.String("o", "", "the catalog to write, `CATALOG.csv` (default: the configuration's catalog path; - for standard output)")
			fs.String("truth", "", "`TRUTH.csv`, where to write the true distances and memberships")
			fs.String("seed", "", "`N`, the seed of the draws, replacing the survey's")
		},
		Run: runSimulate,
	})
}

func runSimulate(env *runEnv, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one model file, got %d arguments", len(args))
	}
	m, err := mock.Load(args[0])
	if err != nil {
		return err
	}
	seed, err := seedFlag(env)
	if err != nil {
		return err
	}
	out := env.flags.Lookup("o").Value.String()
	if out == "" {
		out = m.Config.Catalog
	}
	truthPath := env.flags.Lookup("truth").Value.String()
	if truthPath == "" && out != "-" {
		truthPath = strings.TrimSuffix(out, filepath.Ext(out)) + "-truth.csv"
	}
	n, err := simulateTo(m, seed, out, truthPath, env)
	if err != nil {
		return err
	}
	if out != "-" {
		fmt.Fprintf(env.stderr, "wrote %d sources to %s", n, out)
		if truthPath != "" {
			fmt.Fprintf(env.stderr, " and their true values to %s", truthPath)
		}
		fmt.Fprintln(env.stderr)
	}
	return nil
}

// simulateTo draws the mock and writes the catalog (to stdout for "-") and the truth file.
func simulateTo(m *mock.Model, seed *uint64, out, truthPath string, env *runEnv) (int, error) {
	spec, err := fit.SpecFromConfig(m.Config)
	if err != nil {
		return 0, err
	}
	data, truth, err := m.Render(spec, seed)
	if err != nil {
		return 0, err
	}
	if out == "-" {
		if _, err := env.stdout.Write(data); err != nil {
			return 0, err
		}
	} else {
		if err := atomicfile.MkdirAll(filepath.Dir(out)); err != nil {
			return 0, err
		}
		if err := atomicfile.Write(out, data); err != nil {
			return 0, err
		}
	}
	if truthPath != "" {
		var tb bytes.Buffer
		mock.WriteTruth(&tb, truth)
		if err := atomicfile.Write(truthPath, tb.Bytes()); err != nil {
			return 0, err
		}
	}
	return len(truth), nil
}

// seedFlag returns the value of a --seed flag, nil when it was not given.
func seedFlag(env *runEnv) (*uint64, error) {
	s := env.flags.Lookup("seed").Value.String()
	if s == "" {
		return nil, nil
	}
	v, err := strconv.ParseUint(s, 10, 64)
	if err != nil {
		return nil, usageErrorf("--seed %q: want a non-negative whole number", s)
	}
	return &v, nil
}
