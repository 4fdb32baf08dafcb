package fit

import (
	"context"
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"time"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
)

// Files of a run directory.
const (
	ManifestFile   = "run.json"       // what the run is and how far it got
	ConfigFile     = "config.toml"    // the resolved configuration, usable with fit as it is
	ChainFile      = "chain.npy"      // the chain (NumPy .npy), one record per walker per kept step
	CheckpointFile = "checkpoint.bin" // the sampler's state and the quadrature layouts
	PilotFile      = "pilot.json"     // the pilot stage: MAP point, spreads, quadrature
	LogFile        = "log.txt"        // what the run reported, in order
)

// Run states recorded in the manifest.
const (
	StateRunning  = "running"
	StateStopped  = "stopped"
	StateFinished = "finished"
)

// Manifest describes a run directory.
type Manifest struct {
	Format int    `json:"format"`
	State  string `json:"state"`
	// Step is the step of the last checkpoint: where a resumed run continues.
	Step          int    `json:"step"`
	ConfigHash    string `json:"config_sha256"`
	CatalogPath   string `json:"catalog"`
	CatalogSHA256 string `json:"catalog_sha256"`
	Created       string `json:"created"`
	Updated       string `json:"updated"`
	StopReason    string `json:"stop_reason,omitempty"`
	// RefineUntil is the last step at which the quadratures may be refined: the burn-in
	// of the configuration as written, kept here so that a run resumed with another
	// --steps refines exactly where the uninterrupted run would have.
	RefineUntil int `json:"refine_until"`
}

// Options adjust a fit beyond its configuration.
type Options struct {
	// Out replaces the configuration's run directory when not empty.
	Out string
	// Seed, when not nil, replaces the configuration's seed.
	Seed *uint64
	// Threads, when positive, replaces the configuration's thread count.
	Threads int
	// Steps, when positive, replaces the total chain length.
	Steps int
	// Resume continues a stopped run in the run directory.
	Resume bool
	// Force replaces a run directory that holds a run.
	Force bool
	// MaxDuration, when positive, stops the sampler cleanly after that long.
	MaxDuration time.Duration
	// Progress is called with the sampler's progress.
	Progress func(mcmc.Progress)
	// Log receives human-readable messages (they also go to the run's log file).
	Log io.Writer
}

// Outcome is a fit's result.
type Outcome struct {
	Dir     string
	Job     *Job
	Result  *mcmc.Result
	Pilot   *PilotResult
	Summary *Summary
}

// Apply applies the options' overrides to a configuration.
func (o *Options) Apply(cfg *config.Config) error {
	if o.Out != "" {
		abs, err := filepath.Abs(o.Out)
		if err != nil {
			return err
		}
		cfg.Output = abs
	}
	if o.Seed != nil {
		cfg.Sampler.Seed = *o.Seed
	}
	if o.Threads > 0 {
		cfg.Sampler.Threads = o.Threads
	}
	if o.Steps > 0 {
		// Keep the burn-in's share of the chain.
		if cfg.Sampler.Steps > 0 {
			cfg.Sampler.Burn = int(int64(cfg.Sampler.Burn) * int64(o.Steps) / int64(cfg.Sampler.Steps))
		} else {
			cfg.Sampler.Burn = o.Steps / 4
		}
		cfg.Sampler.Steps = o.Steps
	}
	return cfg.Validate()
}

// chainHash is the configuration's hash with the settings a resume may change (the chain's
// length and burn-in) left out.
func chainHash(cfg *config.Config) string {
	c := *cfg
	c.Sampler.Steps, c.Sampler.MaxSteps, c.Sampler.Burn = 0, 0, 0
	return c.Hash()
}

// FileSHA256 returns the hexadecimal SHA-256 of a file's content.
func FileSHA256(path string) (string, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return "", err
	}
	sum := sha256.Sum256(data)
	return hex.EncodeToString(sum[:]), nil
}

// ReadManifest reads a run directory's manifest.
func ReadManifest(dir string) (*Manifest, error) {
	data, err := os.ReadFile(filepath.Join(dir, ManifestFile))
	if err != nil {
		return nil, err
	}
	var m Manifest
	if err := json.Unmarshal(data, &m); err != nil {
		return nil, fmt.Errorf("%s: %w", filepath.Join(dir, ManifestFile), err)
	}
	return &m, nil
}

func writeJSON(path string, v any) error {
	data, err := json.MarshalIndent(v, "", "  ")
	if err != nil {
		return err
	}
	return atomicfile.Write(path, append(data, '\n'))
}

func now() string { return time.Now().UTC().Format(time.RFC3339) }

// Fit runs a configuration to the end (or until stopped) in its run directory. Everything
// is read and checked before the directory is touched: a bad configuration or catalog
// leaves no directory behind. A new run directory appears whole (made under a temporary
// name and renamed); a finished run is not overwritten without Force; Resume continues a
// stopped run exactly, and is refused if the configuration or the catalog changed.
func Fit(ctx context.Context, cfg *config.Config, opts Options) (*Outcome, error) {
	refineUntil := TuneSteps(cfg.Sampler)
	if err := opts.Apply(cfg); err != nil {
		return nil, err
	}
	cat, err := catalog.ReadFile(cfg.Catalog)
	if err != nil {
		return nil, err
	}
	for _, w := range cat.Warnings {
		if opts.Log != nil {
			fmt.Fprintf(opts.Log, "warning: %s\n", w)
		}
	}
	catHash, err := FileSHA256(cfg.Catalog)
	if err != nil {
		return nil, err
	}
	job, err := Prepare(cfg, cat)
	if err != nil {
		return nil, err
	}
	dir := cfg.Output
	resuming, lock, took, err := claimDir(dir, cfg, catHash, refineUntil, opts)
	if err != nil {
		return nil, err
	}
	defer lock.release()
	if m, err := ReadManifest(dir); err == nil {
		refineUntil = m.RefineUntil
	}
	logFile, err := atomicfile.OpenAppend(filepath.Join(dir, LogFile))
	if err != nil {
		return nil, err
	}
	defer logFile.Close()
	var logw io.Writer = logFile
	if opts.Log != nil {
		logw = io.MultiWriter(logFile, opts.Log)
	}
	job.Log = logw
	if took != nil {
		job.logf("took over the lock of a fit that is no longer running (%s)", took)
	}
	out, err := runIn(ctx, job, dir, resuming, refineUntil, opts)
	if err != nil {
		// The directory stays as a run to resume; say why it stopped.
		updateManifest(dir, func(m *Manifest) {
			if m.State != StateFinished {
				m.State, m.StopReason = StateStopped, err.Error()
			}
		})
		fmt.Fprintf(logFile, "stopped: %v\n", err)
	}
	return out, err
}

// claimDir makes sure dir may hold this run, creating it whole if it does not exist, and
// takes its lock (see LockFile). It reports whether an existing run is to be resumed, and
// the holder of a stale lock it took over.
func claimDir(dir string, cfg *config.Config, catHash string, refineUntil int, opts Options) (resume bool, l *dirLock, took *LockHolder, err error) {
	if _, err := os.Stat(filepath.Join(dir, ManifestFile)); err == nil {
		if l, took, err = lockDir(dir); err != nil {
			return false, nil, nil, err
		}
	}
	resume, nl, err := claimLocked(dir, cfg, catHash, refineUntil, opts)
	if nl != nil {
		l.release()
		l = nl
	}
	if err != nil {
		l.release()
		return false, nil, nil, err
	}
	return resume, l, took, nil
}

// claimLocked is claimDir once an existing run directory is locked; a new directory
// comes with its own lock, returned.
func claimLocked(dir string, cfg *config.Config, catHash string, refineUntil int, opts Options) (bool, *dirLock, error) {
	m, err := ReadManifest(dir)
	switch {
	case err == nil:
		switch {
		case opts.Resume:
			if m.ConfigHash != chainHash(cfg) {
				return false, nil, fmt.Errorf("run directory %s: the configuration differs from the one the run was started with (compare with %s); start a new run instead of resuming",
					dir, filepath.Join(dir, ConfigFile))
			}
			if m.CatalogSHA256 != catHash {
				return false, nil, fmt.Errorf("run directory %s: the catalog %s changed since the run was started; start a new run instead of resuming", dir, cfg.Catalog)
			}
			if m.State == StateFinished {
				if _, err := os.Stat(filepath.Join(dir, CheckpointFile)); err != nil {
					return false, nil, fmt.Errorf("run directory %s: the run is finished and has no checkpoint to continue from", dir)
				}
			}
			// Writes that a killed fit left half done are of no use.
			if err := atomicfile.RemoveTemps(dir); err != nil {
				return false, nil, err
			}
			return true, nil, writeConfig(dir, cfg)
		case opts.Force:
			if err := discardDir(dir); err != nil {
				return false, nil, err
			}
		case m.State == StateFinished:
			return false, nil, fmt.Errorf("run directory %s holds a finished run; use --force to replace it or --out to choose another directory", dir)
		default:
			return false, nil, fmt.Errorf("run directory %s holds a %s run (step %d); use --resume to continue it or --force to start again", dir, m.State, m.Step)
		}
	case errors.Is(err, fs.ErrNotExist):
		entries, derr := os.ReadDir(dir)
		if derr == nil && len(entries) > 0 {
			return false, nil, fmt.Errorf("%s exists and is not a run directory; choose another with --out", dir)
		}
		if derr == nil {
			os.Remove(dir)
		}
	default:
		return false, nil, err
	}
	// A new run directory, made under a temporary name and renamed into place.
	parent := filepath.Dir(dir)
	if err := atomicfile.MkdirAll(parent); err != nil {
		return false, nil, err
	}
	tmp, err := atomicfile.MkdirTemp(parent, "."+filepath.Base(dir)+".new-*")
	if err != nil {
		return false, nil, err
	}
	// It appears locked: the lock is taken before the rename.
	l, _, err := lockDir(tmp)
	if err != nil {
		os.RemoveAll(tmp)
		return false, nil, err
	}
	m = &Manifest{Format: 1, State: StateRunning, ConfigHash: chainHash(cfg), CatalogPath: cfg.Catalog,
		CatalogSHA256: catHash, Created: now(), Updated: now(), RefineUntil: refineUntil}
	if err := writeConfig(tmp, cfg); err == nil {
		err = writeJSON(filepath.Join(tmp, ManifestFile), m)
	}
	if err == nil {
		err = os.Rename(tmp, dir)
	}
	if err == nil {
		err = atomicfile.SyncDir(parent)
	}
	if err != nil {
		l.release()
		os.RemoveAll(tmp)
		return false, nil, fmt.Errorf("creating run directory %s: %w", dir, err)
	}
	return false, l, nil
}

// discardDir removes the run directory dir for --force in two steps: one rename moves it
// into a hidden temporary folder beside it, and that folder is then deleted. A fit killed
// meanwhile leaves either the whole old run under dir or nothing there, never a half-deleted
// run that can be neither resumed nor replaced; what a killed deletion left behind is
// deleted the next time.
func discardDir(dir string) error {
	parent, base := filepath.Dir(dir), filepath.Base(dir)
	if left, _ := filepath.Glob(filepath.Join(parent, "."+base+".old-*")); len(left) > 0 {
		for _, p := range left {
			os.RemoveAll(p)
		}
	}
	trash, err := os.MkdirTemp(parent, "."+base+".old-*")
	if err != nil {
		return fmt.Errorf("replacing run directory %s: %w", dir, err)
	}
	if err := os.Rename(dir, filepath.Join(trash, base)); err != nil {
		os.Remove(trash)
		return fmt.Errorf("replacing run directory %s: %w", dir, err)
	}
	if err := atomicfile.SyncDir(parent); err != nil {
		return err
	}
	return os.RemoveAll(trash)
}

func writeConfig(dir string, cfg *config.Config) error {
	return atomicfile.Write(filepath.Join(dir, ConfigFile), cfg.Resolved())
}

func updateManifest(dir string, f func(m *Manifest)) error {
	m, err := ReadManifest(dir)
	if err != nil {
		return err
	}
	f(m)
	m.Updated = now()
	return writeJSON(filepath.Join(dir, ManifestFile), m)
}

func runIn(ctx context.Context, job *Job, dir string, resuming bool, limit int, opts Options) (*Outcome, error) {
	cfg := job.Config
	ckPath := filepath.Join(dir, CheckpointFile)
	out := &Outcome{Dir: dir, Job: job}
	var pilot *PilotResult
	tune := limit
	if resuming {
		if ck, err := mcmc.LoadCheckpoint(ckPath); err == nil {
			tune = ck.Tuning.Steps // fixed when the run began, whatever --steps says now
			if err := job.Like.UnmarshalLayouts(ck.Extra); err != nil {
				return nil, fmt.Errorf("%s: %w", ckPath, err)
			}
			job.logf("resuming at step %d", ck.Step)
			var err error
			pilot, err = readPilot(filepath.Join(dir, PilotFile), job.Post.Names())
			if errors.Is(err, fs.ErrNotExist) {
				return nil, fmt.Errorf("run directory %s has a checkpoint but no pilot stage: %w", dir, err)
			}
			if err != nil {
				return nil, err
			}
			if err := job.Exclude(pilot.Excluded); err != nil {
				return nil, fmt.Errorf("%s: %w", filepath.Join(dir, PilotFile), err)
			}
		} else if !errors.Is(err, fs.ErrNotExist) {
			return nil, err
		} else {
			resuming = false // stopped before its first checkpoint: start the same run again
		}
	}
	if pilot == nil {
		job.logf("laying out the distance quadratures of %d sources", len(job.Like.Sources))
		began := time.Now()
		var err error
		pilot, err = job.Pilot(ctx, cfg.Sampler.Seed, cfg.Sampler.Threads)
		if err != nil {
			return nil, err
		}
		job.logf("pilot stage done in %.1f s", time.Since(began).Seconds())
		if err := writePilot(filepath.Join(dir, PilotFile), pilot); err != nil {
			return nil, err
		}
	}
	out.Pilot = pilot
	layouts, err := job.Like.MarshalLayouts()
	if err != nil {
		return nil, err
	}
	names := job.Post.Names()
	set := &mcmc.Settings{
		Names:           names,
		Walkers:         cfg.Sampler.Walkers,
		Seed:            cfg.Sampler.Seed,
		Threads:         cfg.Sampler.Threads,
		Moves:           moves(cfg.Sampler),
		TuneSteps:       tune,
		AdaptWeights:    cfg.Sampler.AdaptWeights,
		Steps:           cfg.Sampler.Steps,
		ChainPath:       filepath.Join(dir, ChainFile),
		CheckpointPath:  ckPath,
		CheckpointEvery: cfg.Sampler.CheckpointEvery,
		Resume:          resuming,
		MaxDuration:     opts.MaxDuration,
		Progress:        opts.Progress,
		ProgressEvery:   max(1, min(100, max(cfg.Sampler.Steps, 100)/50)),
	}
	if set.CheckpointEvery == 0 {
		set.CheckpointEvery = 1 << 30
	}
	if cfg.Sampler.Steps == 0 {
		set.AutoStop = true
		set.Steps = cfg.Sampler.MaxSteps
		// The effective sample size decides; 20 τ is enough for the
		// estimate of τ itself to settle (common practice, no source).
		set.MinESS, set.TauFactor = cfg.Sampler.MinESS, 20
	}
	set.AfterCheckpoint = func(step int) error {
		return updateManifest(dir, func(m *Manifest) {
			m.State, m.Step, m.StopReason = StateRunning, step, ""
		})
	}
	first := !resuming
	set.OnCheckpoint = func(ev mcmc.CheckpointEvent) (mcmc.CheckpointReply, error) {
		var reply mcmc.CheckpointReply
		if first {
			first = false
			reply.Extra = layouts
		}
		if ev.Step == 0 {
			return reply, nil
		}
		// Measure the quadrature error at a few walkers for a sample of sources.
		chk, err := job.checkQuadrature(ev.Step, cfg.Sampler.CheckpointEvery, ev.Positions)
		if err != nil {
			return reply, err
		}
		refine := ev.Step <= limit && !ev.Final
		action := "kept as they are (past burn-in)"
		if refine {
			action = "refined"
		}
		name := func(i int) string { return job.Like.Sources[i].Name }
		if msg := chk.report(ev.Step, job.Spec.Tol, name, action); msg != "" {
			job.logf("%s", msg)
		}
		bad := chk.over(job.Spec.Tol)
		if !refine || len(bad) == 0 {
			return reply, nil
		}
		for _, i := range bad {
			if err := job.Like.Refine(i, chk.Params); err != nil {
				return reply, err
			}
		}
		data, err := job.Like.MarshalLayouts()
		if err != nil {
			return reply, err
		}
		reply.TargetChanged, reply.Extra = true, data
		return reply, nil
	}
	spread := make([]float64, len(pilot.Spread))
	for i, s := range pilot.Spread {
		spread[i] = 0.5 * s
	}
	start := mcmc.Start{Center: pilot.MAP, Scale: spread}
	job.logf("sampling: %d walkers, %d dimensions, seed %d", set.Walkers, len(names), set.Seed)
	// Sources are shared among the threads that no walker keeps busy (fewer walkers in a
	// half-step than threads, or the last walkers of one); the value is the same either way.
	logDensity := func(x []float64) float64 { return job.Post.LogDensityParallel(x, set.Threads) }
	began := time.Now()
	res, err := mcmc.Run(ctx, mcmc.Problem{LogDensity: logDensity, Dim: len(names)}, start, set)
	if err != nil {
		return nil, err
	}
	out.Result = res
	job.logf("sampling took %.1f s", time.Since(began).Seconds())
	if res.Status == mcmc.TimeLimit || res.Status == mcmc.Cancelled {
		job.logf("stopped at step %d (%s); continue with --resume", res.Step, res.Status)
		return out, updateManifest(dir, func(m *Manifest) {
			m.State, m.Step, m.StopReason = StateStopped, res.Step, res.Status.String()
		})
	}
	job.logf("sampling ended at step %d: %s", res.Step, res.Status)
	sum, err := Summarise(job, res.Chain, res, pilot)
	if err != nil {
		return nil, err
	}
	out.Summary = sum
	if err := sum.Write(dir); err != nil {
		return nil, err
	}
	return out, updateManifest(dir, func(m *Manifest) {
		m.State, m.Step, m.StopReason = StateFinished, res.Step, res.Status.String()
	})
}

func moves(s config.Sampler) []mcmc.WeightedMove {
	var out []mcmc.WeightedMove
	if s.Moves.Stretch > 0 {
		out = append(out, mcmc.WeightedMove{Move: mcmc.StretchMove{A: s.StretchScale}, Weight: s.Moves.Stretch})
	}
	if s.Moves.DiffEvolution > 0 {
		out = append(out, mcmc.WeightedMove{Move: mcmc.DifferentialMove{}, Weight: s.Moves.DiffEvolution})
	}
	if s.Moves.Walk > 0 {
		out = append(out, mcmc.WeightedMove{Move: mcmc.WalkMove{Subset: 0}, Weight: s.Moves.Walk})
	}
	if s.Moves.DiffSlice > 0 {
		out = append(out, mcmc.WeightedMove{Move: mcmc.DifferentialSliceMove{}, Weight: s.Moves.DiffSlice})
	}
	if s.Moves.GaussSlice > 0 {
		out = append(out, mcmc.WeightedMove{Move: mcmc.GaussianSliceMove{}, Weight: s.Moves.GaussSlice})
	}
	if s.Moves.Independence > 0 {
		out = append(out, mcmc.WeightedMove{Move: mcmc.IndependenceMove{}, Weight: s.Moves.Independence})
	}
	return out
}

// TuneSteps returns the burn-in during which the sampler tunes its slice widths and adapts
// its move weights, and the quadratures may still be refined: the configuration's burn,
// or with none a quarter of the steps, or max_steps/10 for a run that stops on its own.
// A run takes it from its configuration before any --steps (a resumed run keeps its
// checkpoint's), and summaries leave at least these steps out.
func TuneSteps(s config.Sampler) int {
	switch {
	case s.Burn > 0:
		return s.Burn
	case s.Steps > 0:
		return s.Steps / 4
	}
	return s.MaxSteps / 10
}
