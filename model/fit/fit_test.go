package fit

import (
	"bytes"
	"context"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"syscall"
	"testing"

	"github.com/mirabilis-astro/mirabilis/internal/mocktest"
	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/mock"
)

// surveyOf is the [survey] table of the tests' mocks, drawing n sources.
func surveyOf(n int) string {
	return fmt.Sprintf(`
[survey]
sources = %d
seed = 11
fractions = { field = 0.15 }
parallax_error = [0.008, 0.003]
proper_motion_error = [0.03, 0.015]
velocity_error = 3
labelled = 0.1
galactic_share = 0.1
missing_share = 0.05
`, n)
}

// setUp writes a mock catalog of n sources and the fit's configuration, with the given
// extra tables appended, into a new folder and returns the configuration's path and the
// mock.
func setUp(t *testing.T, n int, extra string) (string, *mock.Model) {
	t.Helper()
	return mocktest.Catalog(t, t.TempDir(), surveyOf(n), extra, SpecFromConfig)
}

func load(t *testing.T, path string) *config.Config {
	t.Helper()
	cfg, err := config.Load(path)
	if err != nil {
		t.Fatal(err)
	}
	return cfg
}

// TestResumeIsExact: a fit stopped at step 17 and resumed to 40 steps writes the same chain,
// byte for byte, as a fit of 40 steps that never stopped, and refuses to resume once the
// configuration changed.
func TestResumeIsExact(t *testing.T) {
	if testing.Short() {
		t.Skip("runs three short fits")
	}
	path, _ := setUp(t, 30, "\n[sampler]\nwalkers = 40\nsteps = 40\nburn = 10\ncheckpoint_every = 10\nseed = 5\n")
	dir := filepath.Dir(path)
	ctx := context.Background()
	// Under a umask that would hide files from the group, as on some clusters, the run
	// directory's files still come out 0644 and its folders 0755.
	old := syscall.Umask(0o077)
	whole, err := Fit(ctx, load(t, path), Options{Out: filepath.Join(dir, "whole"), Threads: 2})
	syscall.Umask(old)
	if err != nil {
		t.Fatal(err)
	}
	checkModes(t, filepath.Join(dir, "whole"))
	part := filepath.Join(dir, "part")
	if _, err := Fit(ctx, load(t, path), Options{Out: part, Steps: 17, Threads: 1}); err != nil {
		t.Fatal(err)
	}
	if _, err := Fit(ctx, load(t, path), Options{Out: part, Steps: 17, Threads: 1}); err == nil {
		t.Error("a second fit into a finished run directory was not refused")
	}
	resumed, err := Fit(ctx, load(t, path), Options{Out: part, Steps: 40, Resume: true, Threads: 2})
	if err != nil {
		t.Fatal(err)
	}
	// The evaluation count goes through the checkpoint: the resumed summary reports the
	// uninterrupted run's, at least one evaluation per walker and step, and the cost of
	// an effective sample follows from it.
	ws, rs := whole.Summary, resumed.Summary
	if ws.Evaluations != rs.Evaluations || ws.Evaluations < 40*40 || ws.EvaluationsPerStep < 40 {
		t.Errorf("evaluations %d (%.1f per step) uninterrupted, %d resumed; want equal and at least one per walker and step",
			ws.Evaluations, ws.EvaluationsPerStep, rs.Evaluations)
	}
	if want := ws.SlowestESS / (ws.EvaluationsPerStep * float64(ws.Steps-ws.Burn)); !(ws.ESSPerEvaluation > 0) || math.Abs(ws.ESSPerEvaluation-want) > 1e-12*want {
		t.Errorf("ESS per evaluation %v, want %v", ws.ESSPerEvaluation, want)
	}
	a, _ := os.ReadFile(filepath.Join(dir, "whole", ChainFile))
	b, _ := os.ReadFile(filepath.Join(part, ChainFile))
	if os.Getenv("MIRABILIS_KEEP") != "" {
		os.WriteFile("/tmp/whole.csv", a, 0o644)
		os.WriteFile("/tmp/part.csv", b, 0o644)
		log1, _ := os.ReadFile(filepath.Join(dir, "whole", LogFile))
		log2, _ := os.ReadFile(filepath.Join(part, LogFile))
		t.Logf("%s\n----\n%s", log1, log2)
	}
	if len(a) == 0 || !bytes.Equal(a, b) {
		t.Errorf("resumed chain differs from the uninterrupted one (%d and %d bytes)", len(b), len(a))
	}
	// Cancelled part-way (as Ctrl-C does), then resumed: the same chain again.
	cut := filepath.Join(dir, "cut")
	cctx, cancel := context.WithCancel(ctx)
	out, err := Fit(cctx, load(t, path), Options{Out: cut, Threads: 2, Progress: func(p mcmc.Progress) {
		if p.Step >= 23 {
			cancel()
		}
	}})
	cancel()
	if err != nil {
		t.Fatal(err)
	}
	if out.Summary != nil || out.Result.Step >= 40 {
		t.Fatalf("the cancelled fit ran to step %d", out.Result.Step)
	}
	if m, err := ReadManifest(cut); err != nil || m.State != StateStopped {
		t.Errorf("manifest after cancelling: %+v, %v", m, err)
	}
	if _, err := Fit(ctx, load(t, path), Options{Out: cut, Resume: true, Threads: 1}); err != nil {
		t.Fatal(err)
	}
	if c, _ := os.ReadFile(filepath.Join(cut, ChainFile)); !bytes.Equal(a, c) {
		t.Errorf("chain resumed after cancelling at step %d differs from the uninterrupted one", out.Result.Step)
	}
	// A changed configuration is refused.
	cfg := load(t, path)
	cfg.Membership.FieldScale = 3.5
	if _, err := Fit(ctx, cfg, Options{Out: part, Steps: 50, Resume: true}); err == nil || !strings.Contains(err.Error(), "configuration differs") {
		t.Errorf("resume with a changed configuration: err = %v, want a refusal", err)
	}
}

// TestMovesSameOnAnyThreads: for each move set a configuration can choose besides the
// default mix (which TestResumeIsExact follows over 1 and 2 threads), a short fit writes
// the same chain, byte for byte, on 1 and 2 threads, and its summary reports the moves of
// the configuration with their weights. The reference is the 1-thread fit itself: the
// sampler's streams belong to the walkers, not to the threads.
func TestMovesSameOnAnyThreads(t *testing.T) {
	if testing.Short() {
		t.Skip("runs two short fits for each move set")
	}
	for _, c := range []struct {
		name, sampler string
		want          []MoveUse
	}{
		// 19 sampled dimensions; 40 walkers a half give the independence move's Student t
		// a covariance of full rank.
		{"independence", "walkers = 80\nmoves = { independence = 0.7, differential_evolution = 0.3 }\n",
			[]MoveUse{{Move: mcmc.DifferentialMove{}.String(), Weight: 0.3}, {Move: mcmc.IndependenceMove{}.String(), Weight: 0.7}}},
	} {
		t.Run(c.name, func(t *testing.T) {
			path, _ := setUp(t, 30, "\n[sampler]\nsteps = 20\nburn = 5\nseed = 5\n"+c.sampler)
			var ref []byte
			for _, threads := range []int{1, 2} {
				out := filepath.Join(filepath.Dir(path), fmt.Sprintf("threads%d", threads))
				res, err := Fit(context.Background(), load(t, path), Options{Out: out, Threads: threads})
				if err != nil {
					t.Fatal(err)
				}
				if got := res.Summary.Moves; !slices.Equal(got, c.want) {
					t.Errorf("%d threads: summary's moves %+v, want %+v", threads, got, c.want)
				}
				b, err := os.ReadFile(filepath.Join(out, ChainFile))
				if err != nil {
					t.Fatal(err)
				}
				if ref == nil {
					ref = b
				} else if !bytes.Equal(b, ref) {
					t.Errorf("%d threads: chain differs from the 1-thread chain (%d and %d bytes)", threads, len(b), len(ref))
				}
			}
		})
	}
}

// checkModes fails the test for any file in dir that is not 0644 or folder that is not
// 0755 (the project's rule for run directories, so that collaborators can read results).
func checkModes(t *testing.T, dir string) {
	t.Helper()
	err := filepath.WalkDir(dir, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		info, err := d.Info()
		if err != nil {
			return err
		}
		want := fs.FileMode(0o644)
		if d.IsDir() {
			want = 0o755
		}
		if info.Mode().Perm() != want {
			t.Errorf("%s: mode %v, want %v", path, info.Mode().Perm(), want)
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
}

// TestBadInputLeavesNoDirectory: a catalog with a bad row, or a catalog whose labels name
// no arm, stops the fit before any run directory exists.
func TestBadInputLeavesNoDirectory(t *testing.T) {
	path, _ := setUp(t, 10, "\n[sampler]\nwalkers = 40\nsteps = 10\n")
	dir := filepath.Dir(path)
	catPath := filepath.Join(dir, "sources.csv")
	good, _ := os.ReadFile(catPath)
	lines := strings.Split(string(good), "\n")
	for name, mutate := range map[string]func() string{
		"bad value": func() string {
			return strings.Replace(string(good), lines[3][:strings.Index(lines[3], ",")], lines[3][:strings.Index(lines[3], ",")]+",oops", 1)
		},
		"unknown arm": func() string {
			return strings.TrimSuffix(string(good), "\n") + "\n" + withArm(lines[1], "Nowhere") + "\n"
		},
	} {
		if err := os.WriteFile(catPath, []byte(mutate()), 0o644); err != nil {
			t.Fatal(err)
		}
		out := filepath.Join(dir, "run-"+strings.ReplaceAll(name, " ", "-"))
		_, err := Fit(context.Background(), load(t, path), Options{Out: out})
		if err == nil {
			t.Errorf("%s: the fit was not refused", name)
		}
		if _, serr := os.Stat(out); !errors.Is(serr, fs.ErrNotExist) {
			t.Errorf("%s: run directory %s exists after a refused fit (%v)", name, out, err)
		}
	}
}

// withArm renames a catalog row and sets its arm column (the last) to arm.
func withArm(row, arm string) string {
	f := strings.Split(row, ",")
	f[0] = "extra-source"
	f[len(f)-1] = arm
	return strings.Join(f, ",")
}

// TestRecovery simulates a catalog from known parameters, fits it, and requires every
// global parameter's truth inside its 95% credible interval and the true arm to be the
// most probable for at least 90% of the arm sources that lie farther than one width from
// every other arm. The seed is fixed; MIRABILIS_LONG=1 runs a larger catalog and a longer
// chain.
func TestRecovery(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a fit")
	}
	n, steps := 120, 700
	if os.Getenv("MIRABILIS_LONG") != "" {
		n, steps = 300, 3000
	}
	path, m := setUp(t, n, fmt.Sprintf("\n[sampler]\nwalkers = 40\nsteps = %d\nburn = %d\ncheckpoint_every = 100\nseed = 3\n"+
		"moves = { stretch = 0.2, differential_evolution = 0.8 }\n", steps, steps/2))
	out, err := Fit(context.Background(), load(t, path), Options{Out: filepath.Join(filepath.Dir(path), "run")})
	if err != nil {
		t.Fatal(err)
	}
	s := out.Summary
	t.Logf("acceptance %.3f, longest τ %.1f steps over %d steps", s.Acceptance, s.MaxTau, s.Steps)
	globals := map[string]bool{"R0": true, "Theta0": true, "dTheta_dR": true, "Usun": true, "Vsun": true, "Wsun": true,
		"Us": true, "Vs": true, "Ws": true, "sigma_vir": true}
	for _, q := range s.Params {
		truth, ok := m.Truth[q.Name]
		if !ok {
			continue
		}
		in := truth >= q.Lo95 && truth <= q.Hi95
		t.Logf("%-16s truth %9.4g  median %9.4g  95%% [%9.4g, %9.4g]  inside %v", q.Name, truth, q.Median, q.Lo95, q.Hi95, in)
		if globals[q.Name] && !in {
			t.Errorf("%s: truth %g outside the 95%% interval [%g, %g]", q.Name, truth, q.Lo95, q.Hi95)
		}
	}
	// Membership of the arm sources well clear of the other arms.
	// Drawn again with the mock's own spec, as setUp drew the catalog.
	mockSpec, err := SpecFromConfig(m.Config)
	if err != nil {
		t.Fatal(err)
	}
	_, truth, err := m.Draw(mockSpec, nil)
	if err != nil {
		t.Fatal(err)
	}
	p, err := out.Job.Spec.NewParams(m.Truth)
	if err != nil {
		t.Fatal(err)
	}
	var clear, right int
	for i, tr := range truth {
		if tr.Component == "field" {
			continue
		}
		far := true
		for _, a := range p.Layout.Arms {
			if a.Name == tr.Component {
				continue
			}
			beta := tr.Beta * math.Pi / 180
			lo, hi := a.Windings(beta, p.Layout.EdgeSoftening)
			for k := lo; k <= hi; k++ {
				bn := beta + 2*math.Pi*float64(k)
				if math.Abs(a.Offset(tr.R, bn)) < a.WidthAt(tr.R, p.Layout.R0, p.Layout.WidthSlope) {
					far = false
				}
			}
		}
		if !far {
			continue
		}
		clear++
		if s.Sources[i].Best == tr.Component {
			right++
		}
	}
	t.Logf("arm sources clear of other arms: %d, assigned to their true arm: %d", clear, right)
	if clear == 0 || float64(right) < 0.9*float64(clear) {
		t.Errorf("true arm most probable for %d of %d arm sources clear of other arms; want at least 90%%", right, clear)
	}
}

// TestExcludeInner: with exclude_inner, the sources whose distance lies mostly inside
// R_inner at the first MAP point leave the likelihood, and the rest stay.
func TestExcludeInner(t *testing.T) {
	path, _ := setUp(t, 40, "\ninner_radius = 6\nexclude_inner = true\n\n[sampler]\nwalkers = 40\nsteps = 10\n")
	cfg := load(t, path)
	cat, err := catalog.ReadFile(cfg.Catalog)
	if err != nil {
		t.Fatal(err)
	}
	job, err := Prepare(cfg, cat)
	if err != nil {
		t.Fatal(err)
	}
	res, err := job.Pilot(context.Background(), 1, 2)
	if err != nil {
		t.Fatal(err)
	}
	if len(res.Inner) == 0 || len(res.Inner) == len(job.Like.Sources) {
		t.Fatalf("%d of %d sources flagged inside 6 kpc; the test needs some of each", len(res.Inner), len(job.Like.Sources))
	}
	if len(res.Excluded) != len(res.Inner) {
		t.Errorf("excluded %d sources, flagged %d", len(res.Excluded), len(res.Inner))
	}
	p, err := job.Post.Params(res.MAP)
	if err != nil {
		t.Fatal(err)
	}
	var want float64
	excluded := map[string]bool{}
	for _, n := range res.Excluded {
		excluded[n] = true
	}
	for i, s := range job.Like.Sources {
		if job.Like.Excluded[i] != excluded[s.Name] {
			t.Errorf("%s: excluded %v, pilot says %v", s.Name, job.Like.Excluded[i], excluded[s.Name])
		}
		if !excluded[s.Name] {
			want += job.Like.SourceLogL(i, p)
		}
	}
	if got := job.Like.LogL(p); got != want {
		t.Errorf("ln L = %.12g, the sources kept add up to %.12g", got, want)
	}
}
