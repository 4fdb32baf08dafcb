package mcmc

import (
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"runtime"
	"strconv"
	"time"
)

// Problem is the target of a run: a log-density over R^n.
type Problem struct {
	// LogDensity returns the logarithm of the target density at x, up to an
	// additive constant. −Inf marks a point outside the support; NaN and
	// +Inf are errors. It is called concurrently from several goroutines
	// and must be safe for that; it must not keep or modify x.
	LogDensity func(x []float64) float64
	// Dim is the number of parameters n ≥ 1.
	Dim int
}

// Start says where the walkers begin. Either a Gaussian ball (Center and
// Scale) or a Draw function is used; Draw takes precedence when both are set.
// Points outside the support are redrawn, up to MaxDraws times per walker.
type Start struct {
	// Center is the centre of the ball, one value per parameter.
	Center []float64
	// Scale is the standard deviation of the ball along each parameter,
	// positive. It is also the scale for the MAP search.
	Scale []float64
	// Draw, if not nil, writes the starting point of the given walker into
	// x, using src, the walker's own random stream, for any randomness (so
	// starts are reproducible). It is called concurrently for different
	// walkers, and again for a walker whose point lies outside the support.
	Draw func(walker int, x []float64, src *rand.Rand)
	// MaxDraws is the number of draws allowed per walker before the run
	// gives up with an error. Zero means 1000.
	MaxDraws int
	// FindMAP, if true, first moves Center to the maximum of the log-density
	// found by FindMAP from Center, so that the ball is centred on the
	// maximum a posteriori point. It needs Center and Scale.
	FindMAP bool
	// MAP holds the settings of that search; nil means defaults, with the
	// scales taken from Scale.
	MAP *MAPSettings
}

// Settings controls a run. The zero value of every field means its default,
// stated in the field's comment, except where a field says otherwise; a run
// needs at least a stopping rule (Steps or AutoStop).
type Settings struct {
	// Names are the parameter names, used as chain-file column headers.
	// They may not contain commas, quotes or line breaks and may not be
	// step, walker or log_density. Nil means x0, x1, ….
	Names []string

	// Walkers is the ensemble size: even, at least 4 and at least 2n for n
	// parameters. Zero means max(16, 4n).
	Walkers int
	// Seed determines every random draw of the run. Zero is a valid seed.
	Seed uint64
	// Threads is the number of workers of the shared worker pool (internal/workpool) that
	// evaluate proposals at once.
	// Zero means runtime.GOMAXPROCS(0). The chain does not depend on it.
	Threads int
	// Moves is the mixture of moves; the move of each step is drawn with
	// probability proportional to its weight from a stream of its own.
	// Nil means the stretch move with a = 2 alone.
	Moves []WeightedMove
	// TuneSteps is the number of steps at the start of the run during which
	// the slice moves tune their widths (see DifferentialSliceMove) and,
	// with AdaptWeights, the move weights adapt. Both are frozen from step
	// TuneSteps+1 on, so that the chain after TuneSteps is a Markov chain
	// with a fixed transition kernel; leave at least those steps out of
	// estimates. Zero means no tuning.
	TuneSteps int
	// AdaptWeights makes the move weights adapt during the first TuneSteps
	// steps: the tuning period is cut into five windows, and at the end of
	// each the weights are set so that each move's share of the
	// log-density evaluations is proportional to its expected squared jump
	// distance per evaluation in that window (Pasarica & Gelman 2010, Stat.
	// Sinica 20, 343, use the expected squared jump distance to rank
	// proposals), the jump of each parameter measured in units of its
	// spread over the ensemble: the weight of move k is proportional to
	// r_k/e_k, r_k being its squared jump per evaluation and e_k its
	// evaluations per step. Until the last window every move keeps a
	// weight of at least 0.1/(number of moves) so that it is still
	// measured; after the last, the weights are frozen. A move never used
	// in a window keeps its previous measurements; a move never measured
	// gets the mean of the others.
	AdaptWeights bool

	// Steps is the total length of the chain in steps, counted from the
	// start of the run, so that a resumed run stops at the same step as an
	// uninterrupted one. With AutoStop it is an upper bound; zero then
	// means no bound.
	Steps int
	// AutoStop stops the run once the chain is longer than TauFactor times
	// the largest integrated autocorrelation time, no parameter's time
	// has changed by more than TauTolerance (relative) since the previous
	// check, which happens every TauEvery steps, and every parameter has an
	// effective sample size of at least MinESS after the tuning steps.
	AutoStop bool
	// TauFactor is the required chain length in autocorrelation times.
	// Zero means 50.
	TauFactor float64
	// TauTolerance is the largest relative change of the autocorrelation
	// times between two checks. Zero means 0.01.
	TauTolerance float64
	// TauEvery is the number of steps between estimates of the
	// autocorrelation times (for AutoStop and Progress). Zero means 500.
	TauEvery int
	// MinESS is the effective sample size that, with AutoStop, every
	// parameter must also reach before the run stops: W·(step −
	// TuneSteps)/τ for W walkers and τ in steps. Zero means no such bound.
	MinESS float64
	// Window is the constant c of Sokal's automatic window for the
	// autocorrelation time. Zero means 5.
	Window float64
	// Thin keeps every Thin-th step (steps Thin, 2·Thin, …) in the chain.
	// Zero means 1 (keep all). Autocorrelation times are still in steps.
	Thin int
	// MaxDuration is a wall-clock budget for this call: once it is used up
	// (checked after each step, and never before the first), the run writes
	// a checkpoint and returns with Status TimeLimit. Zero means none.
	MaxDuration time.Duration

	// ChainPath is the chain file (a NumPy .npy file, see the package
	// documentation), to which kept steps are streamed; the chain is then not
	// held in memory. Empty means no file: the chain is kept in memory only.
	ChainPath string
	// CheckpointPath is the checkpoint file. Empty means no checkpoint
	// file; a checkpoint file needs a chain file.
	CheckpointPath string
	// CheckpointEvery is the number of steps between checkpoints (at steps
	// 0, CheckpointEvery, 2·CheckpointEvery, …); a checkpoint calls
	// OnCheckpoint, syncs the chain file and writes the checkpoint file.
	// Zero means 1000.
	CheckpointEvery int
	// Resume continues the run saved in CheckpointPath if that file exists
	// (and starts afresh if it does not); the Start is then ignored. The
	// checkpoint's seed, walkers, dimension, thinning, names and moves must
	// match these settings. When Resume is false an existing chain file is
	// overwritten.
	Resume bool
	// OnCheckpoint, if not nil, is called at every checkpoint before the
	// checkpoint is written; see CheckpointEvent and CheckpointReply.
	OnCheckpoint func(CheckpointEvent) (CheckpointReply, error)
	// AfterCheckpoint, if not nil, is called once the checkpoint file of the
	// given step is safely on disk, for example to record the step where a
	// resumed run would continue. An error stops the run.
	AfterCheckpoint func(step int) error

	// Progress, if not nil, is called every ProgressEvery steps and once
	// at the end of the run.
	Progress func(Progress)
	// ProgressEvery is the number of steps between Progress calls. Zero
	// means 100.
	ProgressEvery int

	// StuckAcceptance flags walkers whose acceptance fraction is below this
	// fraction of the ensemble's median acceptance. Zero means 0.2; a
	// negative value disables the test.
	StuckAcceptance float64
	// StuckGap flags walkers whose median log-density over the later half
	// of the chain lies more than StuckGap below the ensemble median. Zero
	// means max(10, 2√(2n)), about four standard deviations of the
	// log-density of an n-dimensional Gaussian; a negative value disables
	// the test.
	StuckGap float64
}

// CheckpointEvent is passed to Settings.OnCheckpoint.
type CheckpointEvent struct {
	// Step is the number of steps taken.
	Step int
	// Positions and LogDensity are copies of the walkers' state,
	// [walker][parameter] and [walker].
	Positions  [][]float64
	LogDensity []float64
	// Final is true for the checkpoint written when a run stops between
	// the regular checkpoints (step limit, time budget or cancellation). A resumed run
	// continues exactly only if the target is not changed at such a
	// checkpoint.
	Final bool
}

// CheckpointReply is returned by Settings.OnCheckpoint.
type CheckpointReply struct {
	// TargetChanged reports that the log-density has changed (for example
	// its numerical accuracy was raised). Every walker's log-density is then
	// evaluated again, deterministically, before the checkpoint is written
	// and the run continues; all walkers must still lie inside the support.
	TargetChanged bool
	// Extra, if not nil, replaces the caller's bytes stored in the
	// checkpoint (nil keeps the previous ones). They come back in
	// Checkpoint.Extra and Result.Extra; use LoadCheckpoint to read them
	// before resuming.
	Extra []byte
}

// Progress reports on a running chain.
type Progress struct {
	// Step is the number of steps taken; Steps the bound, 0 if none.
	Step, Steps int
	// Acceptance is the ensemble's acceptance fraction since the start.
	Acceptance float64
	// Tau is the largest integrated autocorrelation time (in steps) at the
	// last estimate, NaN before the first.
	Tau float64
	// Evaluations is the number of log-density evaluations of the run so
	// far (the start and every step, over all calls of a resumed run).
	Evaluations int64
	// EvaluationsPerStep is the mean number of evaluations per step (over
	// all walkers) since the end of the tuning steps, or since the start
	// while tuning; TauEvaluations is Tau times it, the autocorrelation
	// time in evaluations.
	EvaluationsPerStep, TauEvaluations float64
	// StepsPerSecond is the speed of this call so far.
	StepsPerSecond float64
	// Elapsed is the wall-clock time of this call so far.
	Elapsed time.Duration
	// ETA estimates the time left, from Steps and, with AutoStop, from
	// TauFactor·Tau; −1 when unknown.
	ETA time.Duration
	// Done is true for the last call, when the run has stopped.
	Done bool
}

// filled is a copy of the settings with defaults applied and checked.
func (s Settings) filled(dim int) (Settings, error) {
	if s.Names == nil {
		s.Names = make([]string, dim)
		for i := range s.Names {
			s.Names[i] = "x" + strconv.Itoa(i)
		}
	}
	if err := checkNames(s.Names, dim); err != nil {
		return s, err
	}
	if s.Walkers == 0 {
		s.Walkers = max(16, 4*dim)
	}
	if s.Walkers < 4 || s.Walkers%2 != 0 || s.Walkers < 2*dim {
		return s, fmt.Errorf("%d walkers: want an even number, at least 4 and at least twice the %d parameters", s.Walkers, dim)
	}
	if s.Threads == 0 {
		s.Threads = runtime.GOMAXPROCS(0)
	}
	if s.Threads < 0 {
		return s, fmt.Errorf("threads = %d, want a positive number", s.Threads)
	}
	if s.Moves == nil {
		s.Moves = []WeightedMove{{Move: StretchMove{}}}
	}
	s.Moves = append([]WeightedMove(nil), s.Moves...)
	for i, m := range s.Moves {
		if m.Move == nil {
			return s, fmt.Errorf("move %d is nil", i)
		}
		if m.Weight == 0 {
			s.Moves[i].Weight = 1
		}
		if w := s.Moves[i].Weight; !(w > 0) || math.IsInf(w, 0) {
			return s, fmt.Errorf("move %d (%s) has weight %v, want a finite positive value", i, describeMove(m.Move), m.Weight)
		}
		if c, ok := m.Move.(moveChecker); ok {
			if err := c.check(dim, s.Walkers/2); err != nil {
				return s, err
			}
		}
	}
	switch {
	case s.TuneSteps < 0:
		return s, fmt.Errorf("tuning steps = %d, want a non-negative number", s.TuneSteps)
	case !(s.MinESS >= 0) || math.IsInf(s.MinESS, 0):
		return s, fmt.Errorf("minimum effective sample size %v, want a finite non-negative value", s.MinESS)
	}
	if s.Steps < 0 {
		return s, fmt.Errorf("steps = %d, want a non-negative number", s.Steps)
	}
	if s.Steps == 0 && !s.AutoStop {
		return s, errors.New("no stopping rule: set Steps or AutoStop")
	}
	if s.TauFactor == 0 {
		s.TauFactor = 50
	}
	if s.TauTolerance == 0 {
		s.TauTolerance = 0.01
	}
	if s.TauEvery == 0 {
		s.TauEvery = 500
	}
	if s.Window == 0 {
		s.Window = DefaultWindow
	}
	if s.Thin == 0 {
		s.Thin = 1
	}
	if s.CheckpointEvery == 0 {
		s.CheckpointEvery = 1000
	}
	if s.ProgressEvery == 0 {
		s.ProgressEvery = 100
	}
	if s.StuckAcceptance == 0 {
		s.StuckAcceptance = 0.2
	}
	if s.StuckGap == 0 {
		s.StuckGap = math.Max(10, 2*math.Sqrt(2*float64(dim)))
	}
	switch {
	case !(s.TauFactor > 0) || math.IsInf(s.TauFactor, 0):
		return s, fmt.Errorf("tau factor %v, want a finite positive value", s.TauFactor)
	case !(s.TauTolerance > 0):
		return s, fmt.Errorf("tau tolerance %v, want a positive value", s.TauTolerance)
	case !(s.Window > 0):
		return s, fmt.Errorf("window constant %v, want a positive value", s.Window)
	case s.TauEvery < 0, s.Thin < 0, s.CheckpointEvery < 0, s.ProgressEvery < 0:
		return s, errors.New("step intervals (TauEvery, Thin, CheckpointEvery, ProgressEvery) must be positive")
	case s.MaxDuration < 0:
		return s, fmt.Errorf("time budget %v, want a non-negative duration", s.MaxDuration)
	case s.CheckpointPath != "" && s.ChainPath == "":
		return s, errors.New("a checkpoint file needs a chain file (set ChainPath)")
	case s.Resume && s.CheckpointPath == "":
		return s, errors.New("resuming needs a checkpoint file (set CheckpointPath)")
	case s.ChainPath != "" && s.ChainPath == s.CheckpointPath:
		return s, errors.New("the chain file and the checkpoint file must differ")
	}
	return s, nil
}

// moveDescriptions returns the descriptions and weights of the moves.
func (s *Settings) moveDescriptions() ([]string, []float64) {
	d := make([]string, len(s.Moves))
	w := make([]float64, len(s.Moves))
	for i, m := range s.Moves {
		d[i] = describeMove(m.Move)
		w[i] = m.Weight
	}
	return d, w
}
