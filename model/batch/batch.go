// Package batch plans many fits of one model as a job array on a cluster: independent
// chains of one configuration, a grid of variants of it, or a calibration set of mock
// catalogs each drawn from the model and fitted. A Plan lists the tasks, one run
// directory each; Write lays out the folder (the variant configurations, the mocks'
// model files and truths) and a Slurm batch script in which the array task's index
// picks the task.
//
// The script is plain and commented so that users can edit it: it asks Slurm to signal
// the task a few minutes before its time limit, passes the signal on to the fit (which
// then finishes its step, writes its checkpoint and exits with status StoppedEarly), and
// requeues the task, whose next start resumes the run where it stopped.
package batch

import (
	"errors"
	"fmt"
	"os"
	"path/filepath"
	"strings"

	"github.com/mirabilis-astro/mirabilis/model/config"
)

// StoppedEarly is the exit status of "mirabilis fit" when a run stopped before its end (a
// signal or its time budget) and can be resumed; the batch script requeues on it.
const StoppedEarly = 75

// Kind says what the tasks of a plan are.
type Kind string

// The kinds of plan.
const (
	// Chains are independent runs of one configuration with different seeds, merged
	// afterwards by "mirabilis report".
	Chains Kind = "chains"
	// Variants are runs of configurations that each change some keys of a base one.
	Variants Kind = "variants"
	// Mocks are calibration runs: each draws a mock catalog from the model with its own
	// true parameters and fits it.
	Mocks Kind = "mocks"
)

// Task is one array task: one run directory.
type Task struct {
	// Name is the task's name, also the name of its folder in the plan's folder.
	Name string
	// Config is the configuration the task fits (absolute path).
	Config string
	// RunDir is the run directory (absolute path).
	RunDir string
	// Seed is the seed of the fit's random streams (and of the mock's draws).
	Seed uint64
	// Model is, for a mock, its model file (absolute path): the truth and the survey
	// that "mirabilis simulate" draws the catalog from. Empty otherwise.
	Model string
	// Catalog and Truth are, for a mock, where simulate writes the catalog and the
	// true distances and memberships (absolute paths).
	Catalog, Truth string

	// files are written by Plan.Write: path → content.
	files map[string][]byte
}

// Plan is a set of tasks under one folder.
type Plan struct {
	// Kind of the tasks.
	Kind Kind
	// Base is the configuration the plan starts from (absolute path).
	Base string
	// Dir is the plan's folder (absolute path): the script and every task's folder.
	Dir string
	// Tasks in array order: task i runs as SLURM_ARRAY_TASK_ID = i.
	Tasks []Task
}

// ScriptName is the file name of the batch script in a plan's folder.
const ScriptName = "job.sh"

// NewChains plans n independent chains of the configuration at path: task i fits it
// with seed base + i, where base is the configuration's sampler seed.
func NewChains(path, dir string, n int) (*Plan, error) {
	if n < 1 {
		return nil, fmt.Errorf("chains: want at least 1, got %d", n)
	}
	cfg, p, err := newPlan(Chains, path, dir)
	if err != nil {
		return nil, err
	}
	width := len(fmt.Sprint(n))
	for i := range n {
		name := fmt.Sprintf("chain-%0*d", width, i+1)
		p.Tasks = append(p.Tasks, Task{
			Name:   name,
			Config: p.Base,
			RunDir: filepath.Join(p.Dir, name),
			Seed:   cfg.Sampler.Seed + uint64(i),
		})
	}
	return p, nil
}

func newPlan(kind Kind, path, dir string) (*config.Config, *Plan, error) {
	cfg, err := config.Load(path)
	if err != nil {
		return nil, nil, err
	}
	base, err := filepath.Abs(path)
	if err != nil {
		return nil, nil, err
	}
	if dir == "" {
		dir = strings.TrimSuffix(base, filepath.Ext(base)) + "-" + string(kind)
	}
	if dir, err = filepath.Abs(dir); err != nil {
		return nil, nil, err
	}
	return cfg, &Plan{Kind: kind, Base: base, Dir: dir}, nil
}

// Exists reports whether the plan's folder already holds anything.
func (p *Plan) Exists() bool {
	entries, err := os.ReadDir(p.Dir)
	return err == nil && len(entries) > 0 || err != nil && !errors.Is(err, os.ErrNotExist)
}

// RunDirs returns the tasks' run directories in array order.
func (p *Plan) RunDirs() []string {
	out := make([]string, len(p.Tasks))
	for i, t := range p.Tasks {
		out[i] = t.RunDir
	}
	return out
}
