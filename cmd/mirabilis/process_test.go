//go:build unix

package main

import (
	"bytes"
	"errors"
	"fmt"
	"math/rand/v2"
	"os"
	"os/exec"
	"path/filepath"
	"slices"
	"strings"
	"sync"
	"syscall"
	"testing"
	"time"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// The tests in this file run fit as a real process, the test binary started again with
// MIRABILIS_TEST_MAIN=1 (see TestMain), so that signals and kill -9 hit a process as
// they do on a cluster.
func TestMain(m *testing.M) {
	if os.Getenv("MIRABILIS_TEST_MAIN") == "1" {
		main()
		return
	}
	code := m.Run()
	if referenceDir != "" {
		os.RemoveAll(referenceDir)
	}
	os.Exit(code)
}

// smallFit writes a mock catalog of 25 sources drawn from the two-armed test galaxy and a
// fit of it (40 walkers, 40 steps, a checkpoint every 4 steps), and returns the
// configuration's path.
func smallFit(t *testing.T, dir string) string {
	t.Helper()
	galaxy, err := os.ReadFile("../../testdata/mock/two-arms.toml")
	if err != nil {
		t.Fatal(err)
	}
	galaxy = append(galaxy, `
[survey]
sources = 25
seed = 11
fractions = { field = 0.15 }
parallax_error = [0.01, 0.004]
proper_motion_error = [0.03, 0.015]
velocity_error = 3
`...)
	os.WriteFile(filepath.Join(dir, "galaxy.toml"), galaxy, 0o644)
	if code, _, errs := runCLI(t, "simulate", filepath.Join(dir, "galaxy.toml"), "--out", filepath.Join(dir, "sources.csv")); code != 0 {
		t.Fatalf("simulate: exit %d: %s", code, errs)
	}
	body, err := os.ReadFile("../../testdata/mock/two-arms-fit.toml")
	if err != nil {
		t.Fatal(err)
	}
	body = append(body, "\n[sampler]\nwalkers = 40\nsteps = 40\nburn = 10\ncheckpoint_every = 4\nseed = 8\nthreads = 1\n"...)
	path := filepath.Join(dir, "fit.toml")
	os.WriteFile(path, body, 0o644)
	return path
}

// fitProcess is a fit running as a process of its own.
type fitProcess struct {
	cmd    *exec.Cmd
	stderr bytes.Buffer
	done   chan struct{}
	err    error
}

func startFit(t *testing.T, args ...string) *fitProcess {
	t.Helper()
	p := &fitProcess{done: make(chan struct{})}
	p.cmd = exec.Command(os.Args[0], append([]string{"fit"}, args...)...)
	p.cmd.Env = append(os.Environ(), "MIRABILIS_TEST_MAIN=1")
	p.cmd.Stderr = &p.stderr
	if err := p.cmd.Start(); err != nil {
		t.Fatal(err)
	}
	go func() {
		p.err = p.cmd.Wait()
		close(p.done)
	}()
	return p
}

// wait waits for the process to end and returns its exit status (−1 if a signal ended
// it).
func (p *fitProcess) wait() int {
	<-p.done
	var ee *exec.ExitError
	if errors.As(p.err, &ee) {
		return ee.ExitCode()
	}
	if p.err != nil {
		return -2
	}
	return 0
}

func (p *fitProcess) exited() bool {
	select {
	case <-p.done:
		return true
	default:
		return false
	}
}

// waitForStep waits until run.json records a checkpoint at step min or later, or the
// process ends.
func waitForStep(t *testing.T, p *fitProcess, dir string, min int) {
	t.Helper()
	deadline := time.Now().Add(5 * time.Minute)
	for time.Now().Before(deadline) && !p.exited() {
		if m, err := fit.ReadManifest(dir); err == nil && m.Step >= min {
			return
		}
		time.Sleep(20 * time.Millisecond)
	}
	t.Fatalf("no checkpoint at step %d or later (process ended: %v; %s)", min, p.exited(), p.stderr.String())
}

func chainBytes(t *testing.T, dir string) []byte {
	t.Helper()
	b, err := os.ReadFile(filepath.Join(dir, fit.ChainFile))
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// reference is the uninterrupted fit that the tests of this file compare with, run once.
var reference struct {
	once  sync.Once
	cfg   string // the configuration
	chain []byte // its chain file
	err   error
}

// referenceFit returns the configuration of the small fit and the chain file of its
// uninterrupted run.
func referenceFit(t *testing.T) (string, []byte) {
	t.Helper()
	reference.once.Do(func() {
		root, err := os.MkdirTemp("", "mirabilis-process-test-")
		if err != nil {
			reference.err = err
			return
		}
		referenceDir = root
		reference.cfg = smallFit(t, root)
		ref := filepath.Join(root, "ref")
		if p := startFit(t, reference.cfg, "--out", ref); p.wait() != 0 {
			reference.err = fmt.Errorf("uninterrupted fit: %s", p.stderr.String())
			return
		}
		reference.chain, reference.err = os.ReadFile(filepath.Join(ref, fit.ChainFile))
	})
	if reference.err != nil {
		t.Fatal(reference.err)
	}
	return reference.cfg, reference.chain
}

// referenceDir is removed when the tests end.
var referenceDir string

// TestKillAndResume: fit killed with SIGKILL at ten moments drawn with a fixed seed and
// resumed each time ends with the chain file of the uninterrupted run, byte for byte (the
// promise of exact resumption). Two moments fall in the pilot stage (a time after the
// start); eight in the sampling, at a drawn step (once run.json records a checkpoint at
// or after it) plus a drawn fraction of a step's time, so that they land in steps,
// chain writes and checkpoint writes alike.
func TestKillAndResume(t *testing.T) {
	if testing.Short() {
		t.Skip("runs a fit killed and resumed ten times")
	}
	cfg, want := referenceFit(t)
	dir := filepath.Join(t.TempDir(), "killed")
	rng := rand.New(rand.NewPCG(2026, 11))
	var steps []int
	for range 8 {
		steps = append(steps, rng.IntN(32)) // of 40 steps: the run never ends first
	}
	slices.Sort(steps)
	var at []string
	for kill := range 10 {
		args := []string{cfg, "--out", dir}
		if kill > 0 {
			args = append(args, "--resume")
		}
		p := startFit(t, args...)
		var where string
		if kill < 2 {
			delay := time.Duration(rng.Float64() * float64(2*time.Second))
			time.Sleep(delay)
			where = fmt.Sprintf("%.2fs after the start", delay.Seconds())
		} else {
			waitForStep(t, p, dir, steps[kill-2])
			delay := time.Duration(rng.Float64() * float64(300*time.Millisecond))
			time.Sleep(delay)
			where = fmt.Sprintf("%.2fs after the checkpoint at or after step %d", delay.Seconds(), steps[kill-2])
		}
		if p.exited() {
			t.Fatalf("kill %d: the fit ended by itself (exit %d): %s", kill, p.wait(), p.stderr.String())
		}
		p.cmd.Process.Signal(syscall.SIGKILL)
		if code := p.wait(); code != -1 {
			t.Fatalf("kill %d: exit %d, want death by SIGKILL: %s", kill, code, p.stderr.String())
		}
		step := -1
		if m, err := fit.ReadManifest(dir); err == nil {
			step = m.Step
		}
		at = append(at, fmt.Sprintf("%s (last checkpoint %d)", where, step))
	}
	t.Logf("killed %s", strings.Join(at, "; "))
	p := startFit(t, cfg, "--out", dir, "--resume")
	if code := p.wait(); code != 0 {
		t.Fatalf("final resume: exit %d: %s", code, p.stderr.String())
	}
	if got := chainBytes(t, dir); !bytes.Equal(got, want) {
		t.Errorf("chain after ten kills (%d bytes) differs from the uninterrupted one (%d bytes)", len(got), len(want))
	}
}

// TestSignalsAndLock: while a fit runs, a second fit on its directory is refused naming
// it; SIGTERM stops the first with exit status 75 and a valid checkpoint recorded in
// run.json; two quick SIGUSR1 stop a resumed run at once, again with 75; the run then
// finishes with the uninterrupted chain.
func TestSignalsAndLock(t *testing.T) {
	if testing.Short() {
		t.Skip("runs fits as processes")
	}
	cfg, want := referenceFit(t)
	dir := filepath.Join(t.TempDir(), "run")
	first := startFit(t, cfg, "--out", dir)
	waitForStep(t, first, dir, 4)
	second := startFit(t, cfg, "--out", dir, "--resume")
	code := second.wait()
	host, _ := os.Hostname()
	msg := second.stderr.String()
	if code != 1 || !strings.Contains(msg, "used by another fit") || !strings.Contains(msg, fmt.Sprintf("process %d on host %s", first.cmd.Process.Pid, host)) {
		t.Errorf("second fit on a busy directory: exit %d, %q; want a refusal naming process %d on %s", code, msg, first.cmd.Process.Pid, host)
	}

	first.cmd.Process.Signal(syscall.SIGTERM)
	if code := first.wait(); code != exitStopped {
		t.Fatalf("after SIGTERM: exit %d, want %d: %s", code, exitStopped, first.stderr.String())
	}
	checkStopped(t, dir)

	// Two signals in a row: the second ends the process at once.
	p := startFit(t, cfg, "--out", dir, "--resume")
	m, _ := fit.ReadManifest(dir)
	waitForStep(t, p, dir, m.Step+4)
	p.cmd.Process.Signal(syscall.SIGUSR1)
	p.cmd.Process.Signal(syscall.SIGUSR1)
	if code := p.wait(); code != exitStopped {
		t.Fatalf("after two SIGUSR1: exit %d, want %d: %s", code, exitStopped, p.stderr.String())
	}
	if _, err := mcmc.LoadCheckpoint(filepath.Join(dir, fit.CheckpointFile)); err != nil {
		t.Errorf("checkpoint after two signals: %v", err)
	}

	if p := startFit(t, cfg, "--out", dir, "--resume"); p.wait() != 0 {
		t.Fatalf("final resume: %s", p.stderr.String())
	}
	if !bytes.Equal(chainBytes(t, dir), want) {
		t.Error("chain after the signals differs from the uninterrupted one")
	}
}

// checkStopped checks that a run stopped by a signal left a valid checkpoint whose step
// run.json records, and a chain file with that many steps.
func checkStopped(t *testing.T, dir string) {
	t.Helper()
	ck, err := mcmc.LoadCheckpoint(filepath.Join(dir, fit.CheckpointFile))
	if err != nil {
		t.Fatalf("checkpoint after SIGTERM: %v", err)
	}
	m, err := fit.ReadManifest(dir)
	if err != nil || m.State != fit.StateStopped || m.Step != ck.Step || ck.Step == 0 {
		t.Errorf("run.json after SIGTERM: %+v, %v; checkpoint at step %d", m, err, ck.Step)
	}
	c, err := mcmc.OpenChain(filepath.Join(dir, fit.ChainFile))
	if err != nil {
		t.Fatal(err)
	}
	defer c.Close()
	if c.Len() != ck.Kept || c.Step(c.Len()-1) != ck.Step {
		t.Errorf("chain file holds %d steps up to %d, checkpoint %d steps up to %d", c.Len(), c.Step(c.Len()-1), ck.Kept, ck.Step)
	}
	if h, _ := fit.ReadLock(dir); h != nil {
		t.Errorf("lock file still names %v after a clean stop", h)
	}
}
