package main

import (
	"bytes"
	"encoding/json"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
	"time"

	"github.com/mirabilis-astro/mirabilis/internal/mocktest"
	"github.com/mirabilis-astro/mirabilis/model/batch"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// slurmRequired is the environment variable that makes the Slurm test fail, rather than
// skip, where no cluster answers. .ci/run sets it after starting a one-node cluster
// (testdata/slurm/cluster.sh).
const slurmRequired = "MIRABILIS_SLURM"

// needSlurm skips the test, or fails it when MIRABILIS_SLURM=required, unless sbatch,
// squeue, scancel and scontrol are on the path and a controller answers.
func needSlurm(t *testing.T) {
	t.Helper()
	required := os.Getenv(slurmRequired) == "required"
	miss := func(format string, args ...any) {
		t.Helper()
		msg := fmt.Sprintf(format, args...)
		if required {
			t.Fatalf("%s (%s=required)", msg, slurmRequired)
		}
		t.Skipf("%s: the batch test needs a Slurm cluster (testdata/slurm/cluster.sh starts one on this machine)", msg)
	}
	for _, tool := range []string{"sbatch", "squeue", "scancel", "scontrol", "sinfo"} {
		if _, err := exec.LookPath(tool); err != nil {
			miss("%s is not installed", tool)
		}
	}
	if out, err := exec.Command("sinfo", "-h", "-o", "%T").CombinedOutput(); err != nil {
		miss("no Slurm controller answers: %v: %s", err, bytes.TrimSpace(out))
	}
	if testing.Short() && !required {
		t.Skip("runs fits under Slurm")
	}
}

// buildProgram builds the mirabilis program into dir and returns its path.
func buildProgram(t *testing.T, dir string) string {
	t.Helper()
	bin := filepath.Join(dir, "mirabilis")
	out, err := exec.Command("go", "build", "-o", bin, ".").CombinedOutput()
	if err != nil {
		t.Fatalf("go build: %v\n%s", err, out)
	}
	return bin
}

// slurmSampler makes each test fit long enough to be caught running: a few thousand
// steps of the small two-armed galaxy, checkpointed often.
const slurmSampler = `
[sampler]
walkers = 40
steps = 1000
burn = 200
seed = 21
checkpoint_every = 25
`

// TestSlurmArray submits a batch array of three chains to a real Slurm cluster, signals
// one task as Slurm does before a time limit, and checks that it checkpointed, requeued
// itself, resumed, and ended with exactly the chain of an uninterrupted run of the same
// seed; then that report merges the three runs.
func TestSlurmArray(t *testing.T) {
	needSlurm(t)
	dir := t.TempDir()
	if err := os.Chmod(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	bin := buildProgram(t, dir)

	cfgPath, _ := mocktest.Catalog(t, dir, figTestSurvey, slurmSampler, fit.SpecFromConfig)

	array := filepath.Join(dir, "array")
	runBin(t, bin, "batch", cfgPath, "--chains", "3", "--cpus", "1", "--time", "00:30:00", "--warning", "2m", "--out", array)
	out, err := exec.Command("sbatch", "--parsable", filepath.Join(array, batch.ScriptName)).CombinedOutput()
	if err != nil {
		t.Fatalf("sbatch: %v: %s", err, out)
	}
	job := strings.Split(strings.TrimSpace(string(out)), ";")[0]
	t.Cleanup(func() { exec.Command("scancel", job).Run() })
	t.Logf("submitted job array %s", job)

	// The uninterrupted run of task 0's seed, beside the array.
	ref := exec.Command(bin, "fit", cfgPath, "--out", filepath.Join(dir, "reference"), "--seed", "21", "--threads", "1")
	var refOut bytes.Buffer
	ref.Stdout, ref.Stderr = &refOut, &refOut
	if err := ref.Start(); err != nil {
		t.Fatal(err)
	}

	// Wait until task 0 has checkpointed, then signal its batch shell as Slurm does
	// before a time limit.
	task0 := job + "_0"
	chain1 := filepath.Join(array, "chain-1")
	waitFor(t, 10*time.Minute, "task 0 to write its first checkpoint", func() bool {
		var man fit.Manifest
		b, err := os.ReadFile(filepath.Join(chain1, fit.ManifestFile))
		return err == nil && json.Unmarshal(b, &man) == nil && man.Step > 0 && man.State == fit.StateRunning
	})
	if out, err := exec.Command("scancel", "--signal=USR1", "--batch", task0).CombinedOutput(); err != nil {
		t.Fatalf("scancel --signal=USR1: %v: %s", err, out)
	}
	restarts := regexp.MustCompile(`Restarts=(\d+)`)
	waitFor(t, 5*time.Minute, "task 0 to requeue itself", func() bool {
		out, _ := exec.Command("scontrol", "show", "job", task0).Output()
		m := restarts.FindSubmatch(out)
		return m != nil && string(m[1]) != "0"
	})
	// Slurm holds a requeued job for a while before it may start again; let it start now.
	exec.Command("scontrol", "update", "JobId="+task0, "StartTime=now").Run()

	waitFor(t, 20*time.Minute, "the array to finish", func() bool {
		out, err := exec.Command("squeue", "-h", "-j", job).Output()
		return err == nil && len(bytes.TrimSpace(out)) == 0
	})
	if err := ref.Wait(); err != nil {
		t.Fatalf("the uninterrupted fit: %v\n%s", err, refOut.String())
	}

	var dirs []string
	for i := 1; i <= 3; i++ {
		run := filepath.Join(array, fmt.Sprintf("chain-%d", i))
		dirs = append(dirs, run)
		var man fit.Manifest
		b, err := os.ReadFile(filepath.Join(run, fit.ManifestFile))
		if err != nil || json.Unmarshal(b, &man) != nil || man.State != fit.StateFinished {
			logs, _ := filepath.Glob(filepath.Join(array, "slurm-*.out"))
			for _, l := range logs {
				b, _ := os.ReadFile(l)
				t.Logf("%s:\n%s", l, b)
			}
			t.Fatalf("%s did not finish (state %q, %v)", run, man.State, err)
		}
	}
	slurmOut, _ := filepath.Glob(filepath.Join(array, "slurm-*_0.out"))
	var log0 []byte
	for _, p := range slurmOut {
		b, _ := os.ReadFile(p)
		log0 = append(log0, b...)
	}
	if !bytes.Contains(log0, []byte("stopped early")) {
		t.Errorf("task 0's output does not say it stopped early:\n%s", log0)
	}
	got, err := os.ReadFile(filepath.Join(chain1, "chain.npy"))
	if err != nil {
		t.Fatal(err)
	}
	want, err := os.ReadFile(filepath.Join(dir, "reference", "chain.npy"))
	if err != nil {
		t.Fatal(err)
	}
	if !bytes.Equal(got, want) {
		t.Errorf("the interrupted and requeued run's chain (%d bytes) differs from the uninterrupted run's (%d bytes)", len(got), len(want))
	}

	rep := runBin(t, bin, append([]string{"report", "--format", "json"}, dirs...)...)
	var merged struct {
		Runs []json.RawMessage `json:"runs"`
	}
	if err := json.Unmarshal(rep, &merged); err != nil {
		t.Fatalf("report --format json: %v\n%s", err, rep)
	}
	if len(merged.Runs) != 3 {
		t.Errorf("report merged %d runs, want 3", len(merged.Runs))
	}
}

// runBin runs the program and returns its standard output, failing the test on a
// non-zero exit.
func runBin(t *testing.T, bin string, args ...string) []byte {
	t.Helper()
	cmd := exec.Command(bin, args...)
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("mirabilis %s: %v\n%s%s", strings.Join(args, " "), err, out, stderr.String())
	}
	return out
}

// waitFor polls cond every half second until it holds, failing the test after limit.
func waitFor(t *testing.T, limit time.Duration, what string, cond func() bool) {
	t.Helper()
	deadline := time.Now().Add(limit)
	for !cond() {
		if time.Now().After(deadline) {
			t.Fatalf("gave up waiting %s for %s", limit, what)
		}
		time.Sleep(500 * time.Millisecond)
	}
}

// TestSlurmCalibration runs a calibration set of three tiny mocks as a Slurm array to the
// end, then reads it with report --coverage and draws the rank histograms.
func TestSlurmCalibration(t *testing.T) {
	needSlurm(t)
	dir := t.TempDir()
	if err := os.Chmod(dir, 0o755); err != nil {
		t.Fatal(err)
	}
	bin := buildProgram(t, dir)
	cfgPath, _ := mocktest.Catalog(t, dir, figTestSurvey, "\n[sampler]\nwalkers = 40\nsteps = 60\nburn = 20\nseed = 3\n", fit.SpecFromConfig)
	survey := filepath.Join(dir, "survey.toml")
	writeFile(t, survey, []byte("[survey]\nsources = 25\n"))

	array := filepath.Join(dir, "mocks")
	runBin(t, bin, "batch", cfgPath, "--mocks", "3", "--survey", survey, "--cpus", "1", "--time", "00:20:00", "--out", array)
	out, err := exec.Command("sbatch", "--parsable", filepath.Join(array, batch.ScriptName)).CombinedOutput()
	if err != nil {
		t.Fatalf("sbatch: %v: %s", err, out)
	}
	job := strings.Split(strings.TrimSpace(string(out)), ";")[0]
	t.Cleanup(func() { exec.Command("scancel", job).Run() })
	waitFor(t, 20*time.Minute, "the calibration array to finish", func() bool {
		out, err := exec.Command("squeue", "-h", "-j", job).Output()
		return err == nil && len(bytes.TrimSpace(out)) == 0
	})
	runs, _ := filepath.Glob(filepath.Join(array, "mock-*", "run"))
	if len(runs) != 3 {
		logs, _ := filepath.Glob(filepath.Join(array, "slurm-*.out"))
		for _, l := range logs {
			b, _ := os.ReadFile(l)
			t.Logf("%s:\n%s", l, b)
		}
		t.Fatalf("%d run directories, want 3", len(runs))
	}
	fig := filepath.Join(dir, "ranks.png")
	rep := runBin(t, bin, append([]string{"report", "--coverage", "--format", "json", "--figure", fig}, runs...)...)
	var cov batch.Coverage
	if err := json.Unmarshal(rep, &cov); err != nil {
		t.Fatalf("report --coverage: %v\n%s", err, rep)
	}
	if len(cov.Runs) != 3 || len(cov.Rows) < 10 {
		t.Fatalf("coverage of %d runs and %d parameters, want 3 runs and every sampled parameter", len(cov.Runs), len(cov.Rows))
	}
	for _, r := range cov.Rows {
		if r.Mocks != 3 || len(r.Ranks) != 3 || r.In68 < 0 || r.In68 > r.In95 || r.In95 > 1 {
			t.Errorf("%s: %+v", r.Name, r)
		}
		for _, k := range r.Ranks {
			if k < 0 || k > cov.RankDraws {
				t.Errorf("%s: rank %d outside 0 … %d", r.Name, k, cov.RankDraws)
			}
		}
	}
	if fi, err := os.Stat(fig); err != nil || fi.Size() < 1000 {
		t.Errorf("rank histograms: %v", err)
	}
}

func writeFile(t *testing.T, path string, data []byte) {
	t.Helper()
	if err := os.WriteFile(path, data, 0o644); err != nil {
		t.Fatal(err)
	}
}
