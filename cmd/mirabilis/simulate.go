package main

import (
	"bytes"
	"errors"
	"flag"
	"fmt"
	"os"
	"path/filepath"
	"strconv"
	"strings"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/model/mock"
)

var simulateCommand = &command{
	Name:  "simulate",
	Usage: "MODEL.toml [--seed N] [--out CATALOG.csv] [--truth TRUTH.csv] [--force]",
	Short: "draw a mock catalog from a model with known parameters",
	Long: `Simulate draws a mock catalog from the model described in MODEL.toml: a run
configuration (see "mirabilis help config") whose parameter priors hold the true
values — write them as fixed(v); a prior that is not fixed contributes its median —
and one more table, [survey], which says how many sources to draw, in what shares
and how well the survey measures them:

  [survey]
  sources = 150                  number of sources
  seed = 7                       seed of the draws (--seed replaces it)
  fractions = { field = 0.15 }   the Galaxy's fractions of the field and of arms
                                 by name; arms not named share the rest equally
  parallax_error = [0.008, 0.004]    mas: σϖ = a + b·d, d in kpc
  proper_motion_error = [0.03, 0.02] mas/yr: σμ = a + b·d
  velocity_error = 3             km/s
  labelled = 0.1                 share of arm sources written with their arm
  galactic_share = 0.0           share written in l, b (else ra, dec)
  missing_share = 0.05           share with one kinematic term left blank

The sources follow exactly the density the fit's likelihood uses, so that the
same description serves the mock and its fit: arm sources spread along each arm
with its ends softened (end_softening) and across it as a Gaussian of the arm's
width at their own radius, field sources in the exponential disk, all in a layer
of Gaussian profile of the true scale_height about the mid-plane, with the Sun
z_sun above it (with vertical = "none" every source lies in the plane, at b = 0).
Sources are drawn from the whole Galaxy and kept where the survey sees them: within
the likelihood's distance_range, and with the probability the [selection] table
gives (declination, exclude_longitude, completeness; see "mirabilis help
config"). Give the fit the same [selection] table. So the fractions are the
Galaxy's, and the catalog's shares differ from them as the selection favours some
components; the truth file lists both. Every source moves with the model's
rotation and mean peculiar motion plus the intrinsic scatter (sigma_vir, and the
bar's inside R_inner).

Earlier mock files set the survey's reach and thickness in [survey]
(declination_range, max_distance, min_distance, height). These are refused, with
what to write instead: declination under [selection], distance_range under
[likelihood] or completeness under [selection], and scale_height under [params].

The catalog goes to --out, by default MODEL-mock.csv next to MODEL.toml ("-" is
standard output); the true distances, memberships and heights go to --truth, by
default the catalog's name with "-truth" added (MODEL-mock-truth.csv when the
catalog goes to standard output), after comment lines (#) giving each component's
fraction in the Galaxy and share of the catalog. The catalog that MODEL.toml names
is never written. An existing file is not replaced without --force. Simulate says where every file went.`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o simulateOptions
		fs.StringVar(&o.out, "out", "", "the catalog to write, `CATALOG.csv` (default: MODEL-mock.csv next to MODEL.toml; - for standard output)")
		fs.StringVar(&o.truth, "truth", "", "`TRUTH.csv`, where to write the true distances and memberships")
		fs.Var(&o.seed, "seed", "`N`, the seed of the draws, replacing the survey's")
		fs.BoolVar(&o.force, "force", false, "replace files that exist")
		return func(env *runEnv, args []string) error { return runSimulate(env, &o, args) }
	},
}

type simulateOptions struct {
	out, truth string
	seed       seedValue
	force      bool
}

func runSimulate(env *runEnv, o *simulateOptions, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one model file, got %d arguments", len(args))
	}
	m, err := mock.Load(args[0])
	if err != nil {
		return err
	}
	base := strings.TrimSuffix(args[0], filepath.Ext(args[0])) + "-mock"
	out := o.out
	if out == "" {
		out = base + ".csv"
	}
	truthPath := o.truth
	switch {
	case truthPath != "":
	case out == "-":
		truthPath = base + "-truth.csv"
	default:
		truthPath = strings.TrimSuffix(out, filepath.Ext(out)) + "-truth.csv"
	}
	if truthPath == "-" {
		return usageErrorf("--truth -: the true values go to a file; only the catalog may go to standard output")
	}
	if out != "-" && sameFile(out, truthPath) {
		return usageErrorf("--out and --truth name the same file %s", out)
	}
	if !o.force {
		var exist []string
		for _, p := range []string{out, truthPath} {
			if p == "-" {
				continue
			}
			if _, err := os.Stat(p); err == nil {
				exist = append(exist, p)
			}
		}
		if len(exist) > 0 {
			return fmt.Errorf("%s already exists; --force replaces it, --out and --truth write elsewhere", strings.Join(exist, " and "))
		}
	}
	n, err := simulateTo(m, o.seed.get(), out, truthPath, env)
	if err != nil {
		return err
	}
	if out == "-" {
		fmt.Fprintf(env.stderr, "wrote %d sources to standard output and their true values to %s\n", n, truthPath)
	} else {
		fmt.Fprintf(env.stderr, "wrote %d sources to %s and their true values to %s\n", n, out, truthPath)
	}
	if out != "-" && !sameFile(out, m.Config.Catalog) {
		fmt.Fprintf(env.stderr, "%s names the catalog %s, which was left as it is; a fit of the mock needs catalog = %q\n",
			args[0], m.Config.Catalog, relativeTo(filepath.Dir(args[0]), out))
	}
	return nil
}

// sameFile reports whether two paths name the same file, as far as can be told without
// either existing: the same absolute path, or the same file on disk.
func sameFile(a, b string) bool {
	if sa, err := os.Stat(a); err == nil {
		if sb, err := os.Stat(b); err == nil {
			return os.SameFile(sa, sb)
		}
	}
	aa, err1 := filepath.Abs(a)
	ab, err2 := filepath.Abs(b)
	return err1 == nil && err2 == nil && aa == ab
}

// relativeTo returns path relative to the folder dir when it can, else path made absolute.
func relativeTo(dir, path string) string {
	ad, err1 := filepath.Abs(dir)
	ap, err2 := filepath.Abs(path)
	if err1 != nil || err2 != nil {
		return path
	}
	if r, err := filepath.Rel(ad, ap); err == nil {
		return filepath.ToSlash(r)
	}
	return ap
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
		m.WriteTruth(&tb, truth)
		if err := atomicfile.Write(truthPath, tb.Bytes()); err != nil {
			return 0, err
		}
	}
	return len(truth), nil
}

// seedValue is the value of a --seed flag: a non-negative whole number, or unset.
type seedValue struct {
	v   uint64
	set bool
}

func (s *seedValue) String() string {
	if s == nil || !s.set {
		return ""
	}
	return strconv.FormatUint(s.v, 10)
}

func (s *seedValue) Set(text string) error {
	v, err := strconv.ParseUint(text, 10, 64)
	if err != nil {
		return errors.New("want a non-negative whole number")
	}
	s.v, s.set = v, true
	return nil
}

// get returns the seed, nil when the flag was not given.
func (s *seedValue) get() *uint64 {
	if !s.set {
		return nil
	}
	v := s.v
	return &v
}
