package mcmc

import (
	"context"
	"errors"
	"fmt"
	"io/fs"
	"math"
	"math/rand/v2"
	"os"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
)

// Status says why a run stopped.
type Status int

const (
	// StepLimit means the chain reached Settings.Steps.
	StepLimit Status = iota + 1
	// Converged means the automatic stopping rule was met.
	Converged
	// TimeLimit means the wall-clock budget was used up.
	TimeLimit
	// Cancelled means the context was cancelled.
	Cancelled
)

// String names the status.
func (s Status) String() string {
	switch s {
	case StepLimit:
		return "step limit reached"
	case Converged:
		return "converged"
	case TimeLimit:
		return "time budget used up"
	case Cancelled:
		return "cancelled"
	}
	return fmt.Sprintf("Status(%d)", int(s))
}

// Result is the outcome of a run.
type Result struct {
	// Chain holds every kept step of the whole run (including the part
	// before a resume).
	Chain *Chain
	// Step is the number of steps taken.
	Step int
	// Status says why the run stopped.
	Status Status
	// Accepted counts each walker's accepted proposals over the whole run.
	Accepted []int
	// Positions and LogDensity are the walkers' final state.
	Positions  [][]float64
	LogDensity []float64
	// Tau is the integrated autocorrelation time of each parameter, in
	// steps, estimated from the whole chain at the end; NaN if the chain is
	// too short or constant.
	Tau []float64
	// TauReliable is true when every τ came from a complete Sokal window
	// and the chain is longer than TauFactor·max τ.
	TauReliable bool
	// Stuck lists walkers that appear stuck (see FlagStuck), judged on the
	// acceptance over the whole run and the later half of the chain.
	Stuck []StuckWalker
	// Extra holds the caller's bytes from the last checkpoint.
	Extra []byte
	// MAP is the result of the MAP search when Start.FindMAP was set (nil
	// otherwise, and after a resume).
	MAP *MAPResult
	// Evaluations is the number of log-density evaluations of the whole
	// run (start and steps, over all calls of a resumed run; not the MAP
	// search, which reports its own). TunedEvaluations is the number made
	// up to the end of step TuneSteps (the start's when TuneSteps is 0), so
	// that Evaluations − TunedEvaluations were spent on the steps after
	// tuning.
	Evaluations, TunedEvaluations int64
	// Seconds is the wall-clock time spent sampling (the start and the
	// steps, over all calls of a resumed run).
	Seconds float64
	// TuneSteps is the settings' TuneSteps.
	TuneSteps int
	// Moves describes each move, as in a checkpoint.
	Moves []string
	// Widths holds each move's slice width μ at the end of the run (frozen
	// after TuneSteps); 0 for the moves that are not slice moves.
	Widths []float64
	// Weights holds each move's probability of being chosen at the end of
	// the run (adapted during TuneSteps with AdaptWeights, else the
	// settings' weights normalised).
	Weights []float64
}

// AcceptanceFraction returns each walker's acceptance fraction.
func (r *Result) AcceptanceFraction() []float64 {
	return AcceptanceFractions(r.Accepted, r.Step)
}

// MeanAcceptance returns the ensemble's acceptance fraction.
func (r *Result) MeanAcceptance() float64 {
	if r.Step == 0 || len(r.Accepted) == 0 {
		return 0
	}
	var a int
	for _, v := range r.Accepted {
		a += v
	}
	return float64(a) / float64(r.Step*len(r.Accepted))
}

// Run samples the problem's log-density with an ensemble of walkers (Goodman
// & Weare 2010, Comm. App. Math. Comp. Sci. 5, 65): each step moves the first
// half of the ensemble against the second, then the second against the
// first, with the move of the step drawn from the settings' mixture. A nil
// settings means defaults, which lack a stopping rule, so in practice
// settings are always given.
//
// The run stops at Settings.Steps, by the automatic rule, when the time
// budget is used up or when ctx is cancelled; the last two write a
// checkpoint and return a Result with the corresponding Status and no error.
// Errors (bad settings, a NaN log-density, a failing file) come with
// context; the run then stops without a final checkpoint, and a resume
// continues from the last one.
func Run(ctx context.Context, p Problem, start Start, settings *Settings) (*Result, error) {
	if settings == nil {
		settings = &Settings{}
	}
	if p.LogDensity == nil {
		return nil, errors.New("mcmc: the problem has no log-density")
	}
	if p.Dim < 1 {
		return nil, fmt.Errorf("mcmc: dimension %d, want at least 1", p.Dim)
	}
	set, err := settings.filled(p.Dim)
	if err != nil {
		return nil, fmt.Errorf("mcmc: settings: %w", err)
	}
	s := newSampler(p, set)
	defer s.close()

	resume := false
	if set.Resume {
		_, err := os.Stat(set.CheckpointPath)
		switch {
		case err == nil:
			resume = true
		case !errors.Is(err, fs.ErrNotExist):
			return nil, fmt.Errorf("mcmc: %w", err)
		}
	}
	if resume {
		err = s.restore()
	} else {
		err = s.begin(start)
	}
	if err != nil {
		return nil, fmt.Errorf("mcmc: %w", err)
	}
	if err := s.loop(ctx); err != nil {
		return nil, fmt.Errorf("mcmc: %w", err)
	}
	return s.result()
}

// sampler is the state of one run.
type sampler struct {
	p   Problem
	set Settings
	dim int
	nw  int

	pos      [][]float64 // [walker][parameter]
	lp       []float64
	accepted []int
	streams  []*rand.PCG
	rands    []*rand.Rand
	moveSrc  *rand.PCG
	moveRand *rand.Rand
	cumW     []float64 // cumulative move weights, normalised
	weights  []float64 // move weights, normalised (adapted while tuning)
	width    []float64 // slice width μ of each move (0 for the others)

	// Evaluation accounting and tuning statistics. The per-walker counts
	// are filled by the workers and summed in walker order after each
	// half-step, so that nothing depends on the number of threads.
	evals      int64     // evaluations so far
	tunedEvals int64     // evaluations up to the end of tuning
	seconds    float64   // sampling time of earlier calls
	nEval      []int64   // per walker, this step
	nExp, nCon []int64   // per walker, this step: slice expansions and contractions
	jump       []float64 // per walker, this step: squared jump in units of spread
	spread     []float64 // per parameter: ensemble spread at the start of the step
	rate       []float64 // per move: squared jump per evaluation (NaN: never measured)
	winJump    []float64 // per move: squared jumps in the current window
	winEval    []float64 // per move: evaluations in the current window
	cost       []float64 // per move: evaluations per step (NaN: never measured)
	winSteps   []float64 // per move: steps in the current window
	adapting   bool      // weights adapt in this step
	moveIdx    int       // the move of this step

	step      int
	loopBegan time.Time // when this call's loop began
	lastTau   []float64
	converged bool
	status    Status
	extra     []byte
	mapRes    *MAPResult

	chain *Chain // in memory, or read back through cw
	cw    *chainWriter

	pool    *pool
	scratch [][]float64 // two proposal buffers per worker, 2w and 2w+1
	errs    []error     // per walker, filled by workers

	// per-half-step arguments of advance
	move    Move
	first   int
	others  [][]float64
	halves  [2][][]float64
	advance func(worker, k int)
}

func newSampler(p Problem, set Settings) *sampler {
	s := &sampler{p: p, set: set, dim: p.Dim, nw: set.Walkers}
	flat := make([]float64, s.nw*s.dim)
	s.pos = make([][]float64, s.nw)
	for i := range s.pos {
		s.pos[i] = flat[i*s.dim : (i+1)*s.dim : (i+1)*s.dim]
	}
	s.lp = make([]float64, s.nw)
	s.accepted = make([]int, s.nw)
	s.streams = make([]*rand.PCG, s.nw)
	s.rands = make([]*rand.Rand, s.nw)
	for i := range s.streams {
		s.streams[i] = newStream(set.Seed, uint64(i))
		s.rands[i] = rand.New(s.streams[i])
	}
	s.moveSrc = newStream(set.Seed, moveStreamTag)
	s.moveRand = rand.New(s.moveSrc)
	var total float64
	for _, m := range set.Moves {
		total += m.Weight
	}
	w := make([]float64, len(set.Moves))
	s.width = make([]float64, len(set.Moves))
	s.rate = make([]float64, len(set.Moves))
	s.winJump = make([]float64, len(set.Moves))
	s.winEval = make([]float64, len(set.Moves))
	s.cost = make([]float64, len(set.Moves))
	s.winSteps = make([]float64, len(set.Moves))
	for k, m := range set.Moves {
		w[k] = m.Weight / total
		if sm, ok := m.Move.(sliceMove); ok {
			s.width[k] = sm.width()
		}
		s.rate[k], s.cost[k] = math.NaN(), math.NaN()
	}
	s.setWeights(w)
	s.nEval = make([]int64, s.nw)
	s.nExp = make([]int64, s.nw)
	s.nCon = make([]int64, s.nw)
	s.jump = make([]float64, s.nw)
	s.spread = make([]float64, s.dim)
	half := s.nw / 2
	s.halves = [2][][]float64{s.pos[:half], s.pos[half:]}
	threads := min(set.Threads, s.nw)
	s.pool = newPool(threads)
	s.scratch = make([][]float64, 2*threads)
	for i := range s.scratch {
		s.scratch[i] = make([]float64, s.dim)
	}
	s.errs = make([]error, s.nw)
	s.advance = s.advanceWalker
	s.chain = NewChain(set.Names, s.nw)
	return s
}

func (s *sampler) close() {
	s.pool.stop()
	if s.cw != nil {
		s.cw.close()
		s.cw = nil
	}
}

// eval evaluates the log-density, turning a panic into an error.
func (s *sampler) eval(x []float64) (v float64, err error) {
	defer func() {
		if r := recover(); r != nil {
			err = fmt.Errorf("log-density panicked: %v", r)
		}
	}()
	return s.p.LogDensity(x), nil
}

// point formats a position with the parameter names, for error messages.
func (s *sampler) point(x []float64) string {
	var b strings.Builder
	b.WriteByte('(')
	for j, v := range x {
		if j > 0 {
			b.WriteString(", ")
		}
		b.WriteString(s.set.Names[j])
		b.WriteByte('=')
		b.WriteString(strconv.FormatFloat(v, 'g', -1, 64))
	}
	b.WriteByte(')')
	return b.String()
}

// firstError returns the lowest-indexed walker error and clears them all.
func (s *sampler) firstError() error {
	var first error
	for i, e := range s.errs {
		if e != nil && first == nil {
			first = e
		}
		s.errs[i] = nil
	}
	return first
}

// begin draws the starting ensemble, creates the chain file and writes the
// checkpoint of step 0.
func (s *sampler) begin(st Start) error {
	draws := st.MaxDraws
	if draws == 0 {
		draws = 1000
	}
	if draws < 0 {
		return fmt.Errorf("start: %d draws allowed, want a positive number", draws)
	}
	var center, scale []float64
	if st.Draw == nil || st.FindMAP {
		if len(st.Center) != s.dim || len(st.Scale) != s.dim {
			return fmt.Errorf("start: centre has %d values and scale %d, want %d each", len(st.Center), len(st.Scale), s.dim)
		}
		for i, v := range st.Scale {
			if !(v > 0) || math.IsInf(v, 0) {
				return fmt.Errorf("start: scale of %s is %v, want a finite positive value", s.set.Names[i], v)
			}
			if math.IsNaN(st.Center[i]) || math.IsInf(st.Center[i], 0) {
				return fmt.Errorf("start: centre of %s is %v, want a finite value", s.set.Names[i], st.Center[i])
			}
		}
		center = append([]float64(nil), st.Center...)
		scale = st.Scale
	}
	if st.FindMAP {
		ms := MAPSettings{}
		if st.MAP != nil {
			ms = *st.MAP
		}
		if ms.Scale == nil {
			ms.Scale = scale
		}
		res, err := FindMAP(s.p.LogDensity, center, &ms)
		if err != nil {
			return fmt.Errorf("start: %w", err)
		}
		s.mapRes = res
		copy(center, res.X)
	}
	began := time.Now()
	s.pool.run(s.nw, func(_, i int) {
		x, r := s.pos[i], s.rands[i]
		for try := 0; try < draws; try++ {
			s.nEval[i]++
			if st.Draw != nil {
				st.Draw(i, x, r)
			} else {
				for j := range x {
					x[j] = center[j] + scale[j]*r.NormFloat64()
				}
			}
			v, err := s.eval(x)
			switch {
			case err != nil:
				s.errs[i] = fmt.Errorf("start: walker %d at %s: %w", i, s.point(x), err)
				return
			case math.IsNaN(v) || math.IsInf(v, 1):
				s.errs[i] = fmt.Errorf("start: walker %d: log-density is %v at %s", i, v, s.point(x))
				return
			case !math.IsInf(v, -1):
				s.lp[i] = v
				return
			}
		}
		s.errs[i] = fmt.Errorf("start: walker %d found no point inside the support in %d draws (last %s)", i, draws, s.point(x))
	})
	if err := s.firstError(); err != nil {
		return err
	}
	s.countEvaluations()
	s.tunedEvals = s.evals
	s.seconds = time.Since(began).Seconds()
	if s.set.ChainPath != "" {
		cw, err := createChainFile(s.set.ChainPath, s.set.Names, s.nw)
		if err != nil {
			return err
		}
		s.cw, s.chain = cw, cw.view()
	}
	if s.set.CheckpointPath != "" || s.set.OnCheckpoint != nil {
		return s.checkpoint(false)
	}
	return nil
}

// restore loads the checkpoint and the chain file.
func (s *sampler) restore() error {
	ck, err := LoadCheckpoint(s.set.CheckpointPath)
	if err != nil {
		return fmt.Errorf("resuming: %w", err)
	}
	moves, weights := s.set.moveDescriptions()
	var diff string
	switch {
	case ck.Seed != s.set.Seed:
		diff = fmt.Sprintf("seed %d, settings have %d", ck.Seed, s.set.Seed)
	case ck.Walkers != s.nw:
		diff = fmt.Sprintf("%d walkers, settings have %d", ck.Walkers, s.nw)
	case ck.Dim != s.dim:
		diff = fmt.Sprintf("%d parameters, the problem has %d", ck.Dim, s.dim)
	case ck.Thin != s.set.Thin:
		diff = fmt.Sprintf("thinning %d, settings have %d", ck.Thin, s.set.Thin)
	case !slices.Equal(ck.Names, s.set.Names):
		diff = fmt.Sprintf("parameters %v, settings have %v", ck.Names, s.set.Names)
	case !slices.Equal(ck.Moves, moves) || !slices.Equal(ck.Weights, weights):
		diff = fmt.Sprintf("moves %v with weights %v, settings have %v with %v", ck.Moves, ck.Weights, moves, weights)
	case ck.Tuning.Steps != s.set.TuneSteps || ck.Tuning.Adapt != s.set.AdaptWeights:
		diff = fmt.Sprintf("%d tuning steps (adapting weights: %t), settings have %d (%t)",
			ck.Tuning.Steps, ck.Tuning.Adapt, s.set.TuneSteps, s.set.AdaptWeights)
	}
	if diff != "" {
		return fmt.Errorf("resuming: checkpoint %s was written with %s", s.set.CheckpointPath, diff)
	}
	for i := range s.pos {
		copy(s.pos[i], ck.Positions[i])
		s.lp[i] = ck.LogDensity[i]
		s.accepted[i] = ck.Accepted[i]
		if err := s.streams[i].UnmarshalBinary(ck.walkerStreams[i]); err != nil {
			return fmt.Errorf("resuming: checkpoint %s: random stream of walker %d: %w", s.set.CheckpointPath, i, err)
		}
	}
	if err := s.moveSrc.UnmarshalBinary(ck.moveStream); err != nil {
		return fmt.Errorf("resuming: checkpoint %s: move-choice stream: %w", s.set.CheckpointPath, err)
	}
	if err := s.restoreTuning(ck); err != nil {
		return fmt.Errorf("resuming: checkpoint %s: %w", s.set.CheckpointPath, err)
	}
	s.step = ck.Step
	s.lastTau = ck.LastTau
	s.converged = ck.Converged
	s.extra = ck.Extra
	cw, err := reopenChainFile(s.set.ChainPath, s.set.Names, s.nw, ck.ChainBytes, ck.ChainCRC)
	if err != nil {
		return err
	}
	s.cw, s.chain = cw, cw.view()
	if cw.rows != ck.Kept {
		return fmt.Errorf("resuming: chain file %s holds %d steps, the checkpoint expects %d", s.set.ChainPath, cw.rows, ck.Kept)
	}
	return nil
}

// loop runs steps until a stopping rule holds.
func (s *sampler) loop(ctx context.Context) error {
	began := time.Now()
	s.loopBegan = began
	first := s.step
	saved := true // the state at s.step is in a checkpoint (or needs none)
	for {
		var st Status
		switch {
		case s.set.Steps > 0 && s.step >= s.set.Steps:
			st = StepLimit
		case s.set.AutoStop && s.converged:
			st = Converged
		case ctx.Err() != nil:
			st = Cancelled
		case s.set.MaxDuration > 0 && s.step > first && time.Since(began) >= s.set.MaxDuration:
			st = TimeLimit
		}
		if st != 0 {
			s.status = st
			if !saved {
				if err := s.checkpoint(true); err != nil {
					return err
				}
			} else if s.cw != nil {
				if err := s.cw.sync(); err != nil {
					return err
				}
			}
			if s.set.Progress != nil {
				s.set.Progress(s.progress(began, first, true))
			}
			return nil
		}
		if err := s.takeStep(); err != nil {
			return err
		}
		saved = s.set.CheckpointPath == "" && s.set.OnCheckpoint == nil
		if s.step%s.set.Thin == 0 {
			if err := s.keep(); err != nil {
				return err
			}
		}
		if (s.set.AutoStop || s.set.Progress != nil) && s.step%s.set.TauEvery == 0 {
			s.checkTau()
		}
		if s.step%s.set.CheckpointEvery == 0 && !saved {
			if err := s.checkpoint(false); err != nil {
				return err
			}
			saved = true
		}
		if s.set.Progress != nil && s.step%s.set.ProgressEvery == 0 {
			s.set.Progress(s.progress(began, first, false))
		}
	}
}

// takeStep moves the first half of the ensemble against the second, then the
// second against the first.
func (s *sampler) takeStep() error {
	u := s.moveRand.Float64()
	k := 0
	for k < len(s.cumW)-1 && u >= s.cumW[k] {
		k++
	}
	s.moveIdx = k
	s.move = s.set.Moves[k].Move
	s.adapting = s.set.AdaptWeights && s.step < s.set.TuneSteps && len(s.set.Moves) > 1
	if s.adapting {
		s.measureSpread()
	}
	half := s.nw / 2
	for h := 0; h < 2; h++ {
		s.first = h * half
		s.others = s.halves[1-h]
		s.pool.run(half, s.advance)
		if err := s.firstError(); err != nil {
			return fmt.Errorf("step %d: %w", s.step+1, err)
		}
	}
	s.step++
	s.tune()
	return nil
}

// advanceWalker proposes, evaluates and accepts or rejects a move of walker
// s.first+k, using worker's proposal buffer.
func (s *sampler) advanceWalker(worker, k int) {
	i := s.first + k
	if m, ok := s.move.(sliceMove); ok {
		s.sliceWalker(i, s.scratch[2*worker], s.scratch[2*worker+1], m)
		return
	}
	x, r, y := s.pos[i], s.rands[i], s.scratch[2*worker]
	logf := s.move.Propose(y, x, s.others, r)
	if math.IsNaN(logf) {
		s.errs[i] = fmt.Errorf("walker %d: move %s returned a NaN log-factor for the proposal %s", i, describeMove(s.move), s.point(y))
		return
	}
	v, ok := s.evalWalker(i, y)
	if !ok || math.IsInf(v, -1) {
		return
	}
	d := logf + v - s.lp[i]
	if d < 0 && !(math.Log(r.Float64()) < d) {
		return
	}
	s.moveWalker(i, y, v)
}

// evalWalker evaluates the log-density at y for walker i, counting the
// evaluation; on a NaN, +Inf or a panic it records the walker's error and
// returns false.
func (s *sampler) evalWalker(i int, y []float64) (float64, bool) {
	s.nEval[i]++
	v, err := s.eval(y)
	if err != nil {
		s.errs[i] = fmt.Errorf("walker %d at %s: %w", i, s.point(y), err)
		return v, false
	}
	if math.IsNaN(v) || math.IsInf(v, 1) {
		s.errs[i] = fmt.Errorf("walker %d: log-density is %v at %s", i, v, s.point(y))
		return v, false
	}
	return v, true
}

// moveWalker moves walker i to y, where the log-density is v.
func (s *sampler) moveWalker(i int, y []float64, v float64) {
	x := s.pos[i]
	if s.adapting {
		var d float64
		for j, sd := range s.spread {
			if sd > 0 {
				e := (y[j] - x[j]) / sd
				d += e * e
			}
		}
		s.jump[i] = d
	}
	copy(x, y)
	s.lp[i] = v
	s.accepted[i]++
}

// maxShrink bounds the contractions of one slice update. Each contraction
// at least halves the interval on average, so a log-density that is the
// same function at every call finds a point long before; reaching the
// bound means it is not.
const maxShrink = 1000

// sliceWalker moves walker i by slice sampling along the direction of the
// slice move m scaled by the move's width (Neal 2003, Ann. Stat. 31, 705:
// the level under the current point, stepping out with at most m's
// maxSteps expansions split at random between the two ends as in his
// Fig. 3, and shrinking as in his Fig. 5), using eta and y as work space.
// Every random number comes from the walker's own stream.
func (s *sampler) sliceWalker(i int, eta, y []float64, m sliceMove) {
	x, r := s.pos[i], s.rands[i]
	m.Propose(eta, x, s.others, r)
	mu := s.width[s.moveIdx]
	for j := range eta {
		eta[j] *= mu
	}
	level := s.lp[i] - r.ExpFloat64() // ln of a uniform height under p(x)
	left := -r.Float64()
	right := left + 1
	steps := m.maxSteps()
	jl := int(float64(steps) * r.Float64())
	kr := steps - 1 - jl
	at := func(t float64) (float64, bool) {
		for j := range y {
			y[j] = x[j] + t*eta[j]
		}
		return s.evalWalker(i, y)
	}
	for ; jl > 0; jl-- {
		v, ok := at(left)
		if !ok {
			return
		}
		if !(v > level) {
			break
		}
		left--
		s.nExp[i]++
	}
	for ; kr > 0; kr-- {
		v, ok := at(right)
		if !ok {
			return
		}
		if !(v > level) {
			break
		}
		right++
		s.nExp[i]++
	}
	for range maxShrink {
		t := left + r.Float64()*(right-left)
		v, ok := at(t)
		if !ok {
			return
		}
		if v > level {
			s.moveWalker(i, y, v)
			return
		}
		if t < 0 {
			left = t
		} else {
			right = t
		}
		s.nCon[i]++
	}
	s.errs[i] = fmt.Errorf("walker %d: slice move %s found no point above the slice in %d contractions from %s: the log-density does not return the same value for the same point",
		i, describeMove(m), maxShrink, s.point(x))
}

// measureSpread sets the spread of each parameter over the ensemble (its
// standard deviation), the unit of the jumps by which the weights adapt.
func (s *sampler) measureSpread() {
	for j := range s.spread {
		var m float64
		for _, x := range s.pos {
			m += x[j]
		}
		m /= float64(s.nw)
		var v float64
		for _, x := range s.pos {
			v += (x[j] - m) * (x[j] - m)
		}
		s.spread[j] = math.Sqrt(v / float64(s.nw-1))
	}
}

// countEvaluations adds the walkers' evaluations to the total, in walker
// order, and clears them.
func (s *sampler) countEvaluations() int64 {
	var n int64
	for i, v := range s.nEval {
		n += v
		s.nEval[i] = 0
	}
	s.evals += n
	return n
}

// tune accounts for the step just taken and, during the tuning steps,
// tunes the width of its slice move (Karamanis & Beutler 2021, Stat.
// Comput. 31, 61, Algorithm 4) and adapts the weights (see
// Settings.AdaptWeights). All sums run in walker order.
func (s *sampler) tune() {
	evals := s.countEvaluations()
	var ne, nc int64
	var jump float64
	for i := range s.nExp {
		ne += s.nExp[i]
		nc += s.nCon[i]
		jump += s.jump[i]
		s.nExp[i], s.nCon[i], s.jump[i] = 0, 0, 0
	}
	if s.step > s.set.TuneSteps {
		return
	}
	k := s.moveIdx
	if s.width[k] > 0 {
		e := float64(max(ne, 1))
		s.width[k] *= 2 * e / (e + float64(nc))
	}
	if s.adapting {
		s.winJump[k] += jump
		s.winEval[k] += float64(evals)
		s.winSteps[k]++
		window := max(1, s.set.TuneSteps/5)
		if last := s.step == s.set.TuneSteps; last || s.step%window == 0 {
			s.adaptWeights(last)
		}
	}
	if s.step == s.set.TuneSteps {
		s.tunedEvals = s.evals
	}
}

// adaptWeights sets the move weights from the squared jumps per evaluation
// measured in the window that ends now (see Settings.AdaptWeights).
func (s *sampler) adaptWeights(last bool) {
	n := len(s.rate)
	for k := range s.rate {
		if s.winEval[k] > 0 {
			s.rate[k] = s.winJump[k] / s.winEval[k]
			s.cost[k] = s.winEval[k] / s.winSteps[k]
		}
		s.winJump[k], s.winEval[k], s.winSteps[k] = 0, 0, 0
	}
	meanOf := func(x []float64) float64 {
		var m float64
		var known int
		for _, v := range x {
			if !math.IsNaN(v) {
				m += v
				known++
			}
		}
		return m / float64(known)
	}
	meanRate, meanCost := meanOf(s.rate), meanOf(s.cost)
	if !(meanRate > 0) || !(meanCost > 0) {
		return
	}
	w := make([]float64, n)
	var total float64
	for k, r := range s.rate {
		c := s.cost[k]
		if math.IsNaN(r) {
			r, c = meanRate, meanCost
		}
		w[k] = r / c
		total += w[k]
	}
	for k := range w {
		w[k] /= total
	}
	if !last {
		floor := 0.1 / float64(n)
		total = 0
		for k := range w {
			w[k] = math.Max(w[k], floor)
			total += w[k]
		}
		for k := range w {
			w[k] /= total
		}
	}
	s.setWeights(w)
}

// setWeights sets the normalised move weights and their cumulative sums.
func (s *sampler) setWeights(w []float64) {
	s.weights = w
	s.cumW = s.cumW[:0]
	var c float64
	for _, v := range w {
		c += v
		s.cumW = append(s.cumW, c)
	}
	s.cumW[len(s.cumW)-1] = 1
}

// elapsed returns the sampling time of the run so far, in seconds.
func (s *sampler) elapsed() float64 {
	if s.loopBegan.IsZero() {
		return s.seconds
	}
	return s.seconds + time.Since(s.loopBegan).Seconds()
}

// evaluationsPerStep returns the mean evaluations per step since the end of
// tuning, or since the start while tuning.
func (s *sampler) evaluationsPerStep() float64 {
	if s.step > s.set.TuneSteps {
		return float64(s.evals-s.tunedEvals) / float64(s.step-s.set.TuneSteps)
	}
	if s.step > 0 {
		return float64(s.evals) / float64(s.step)
	}
	return math.NaN()
}

// keep appends the current state to the chain file, or to the chain in memory
// when there is no file.
func (s *sampler) keep() error {
	if s.cw == nil {
		return s.chain.Append(s.step, s.pos, s.lp)
	}
	if err := s.cw.writeStep(s.step, s.pos, s.lp); err != nil {
		return err
	}
	s.chain.rows = s.cw.rows
	return nil
}

// tauCheckRows bounds the number of kept rows used for the autocorrelation
// estimates during a run: longer chains are thinned for the estimate, which
// keeps the checks cheap; an estimate from a chain thinned by f is reliable
// while τ ≫ f and otherwise too large, so the stopping rule stays on the safe
// side. The final estimate in the Result uses every row.
const tauCheckRows = 1 << 14

// estimateTau returns the autocorrelation time of every parameter in steps,
// and whether every estimate had a complete window, using every f-th kept
// row with f chosen so that at most maxRows rows are used (0: all rows).
func (s *sampler) estimateTau(maxRows int) ([]float64, bool) {
	tau := make([]float64, s.dim)
	f := 1
	if maxRows > 0 && s.chain.Len() > maxRows {
		f = (s.chain.Len() + maxRows - 1) / maxRows
	}
	allOK := s.chain.Len() > 0
	for j := range tau {
		series := s.chain.seriesEvery(j, f)
		t, ok := AutocorrTime(series, s.set.Window)
		tau[j] = t * float64(s.set.Thin*f)
		allOK = allOK && ok && !math.IsNaN(t)
	}
	return tau, allOK
}

// checkTau estimates the autocorrelation times and applies the automatic
// stopping rule.
func (s *sampler) checkTau() {
	tau, ok := s.estimateTau(tauCheckRows)
	conv := ok && s.lastTau != nil && len(s.lastTau) == len(tau)
	var worst float64
	for j, t := range tau {
		worst = math.Max(worst, t)
		if conv && !(math.Abs(s.lastTau[j]-t) < s.set.TauTolerance*t) {
			conv = false
		}
	}
	ess := float64(s.nw*(s.step-s.set.TuneSteps)) / worst
	s.converged = conv && float64(s.step) > s.set.TauFactor*worst && (s.set.MinESS == 0 || ess >= s.set.MinESS)
	s.lastTau = tau
}

// checkpoint calls the caller's hook, re-evaluates the walkers if the target
// changed, syncs the chain file and writes the checkpoint file.
func (s *sampler) checkpoint(final bool) error {
	if s.set.OnCheckpoint != nil {
		ev := CheckpointEvent{Step: s.step, Positions: make([][]float64, s.nw), LogDensity: append([]float64(nil), s.lp...), Final: final}
		for i, x := range s.pos {
			ev.Positions[i] = append([]float64(nil), x...)
		}
		reply, err := s.set.OnCheckpoint(ev)
		if err != nil {
			return fmt.Errorf("checkpoint at step %d: %w", s.step, err)
		}
		if reply.Extra != nil {
			s.extra = append([]byte(nil), reply.Extra...)
		}
		if reply.TargetChanged {
			s.pool.run(s.nw, func(_, i int) {
				s.nEval[i]++
				v, err := s.eval(s.pos[i])
				switch {
				case err != nil:
					s.errs[i] = fmt.Errorf("walker %d at %s: %w", i, s.point(s.pos[i]), err)
				case math.IsNaN(v) || math.IsInf(v, 0):
					s.errs[i] = fmt.Errorf("walker %d: log-density is %v at %s", i, v, s.point(s.pos[i]))
				default:
					s.lp[i] = v
				}
			})
			if err := s.firstError(); err != nil {
				return fmt.Errorf("checkpoint at step %d: after the target changed: %w", s.step, err)
			}
			s.countEvaluations()
		}
	}
	if s.cw != nil {
		if err := s.cw.sync(); err != nil {
			return err
		}
	}
	if s.set.CheckpointPath == "" {
		return nil
	}
	moves, weights := s.set.moveDescriptions()
	ck := &Checkpoint{
		Step: s.step, Seed: s.set.Seed, Walkers: s.nw, Dim: s.dim, Thin: s.set.Thin,
		Names: s.set.Names, Moves: moves, Weights: weights,
		Positions: s.pos, LogDensity: s.lp, Accepted: s.accepted,
		Kept: s.chain.Len(), LastTau: s.lastTau, Extra: s.extra,
		Converged: s.converged,
		Tuning:    s.saveTuning(),
	}
	if s.cw != nil {
		ck.ChainBytes, ck.ChainCRC = s.cw.size, s.cw.crc
	}
	for _, p := range s.streams {
		b, err := p.MarshalBinary()
		if err != nil {
			return fmt.Errorf("checkpoint at step %d: %w", s.step, err)
		}
		ck.walkerStreams = append(ck.walkerStreams, b)
	}
	b, err := s.moveSrc.MarshalBinary()
	if err != nil {
		return fmt.Errorf("checkpoint at step %d: %w", s.step, err)
	}
	ck.moveStream = b
	if err := atomicfile.Write(s.set.CheckpointPath, ck.encode()); err != nil {
		return fmt.Errorf("checkpoint at step %d: %w", s.step, err)
	}
	if s.set.AfterCheckpoint != nil {
		if err := s.set.AfterCheckpoint(s.step); err != nil {
			return fmt.Errorf("after the checkpoint at step %d: %w", s.step, err)
		}
	}
	return nil
}

// saveTuning returns the tuning and accounting state for a checkpoint.
func (s *sampler) saveTuning() Tuning {
	return Tuning{
		Steps: s.set.TuneSteps, Adapt: s.set.AdaptWeights,
		Widths: s.width, Weights: s.weights, Rates: s.rate,
		WindowJumps: s.winJump, WindowEvaluations: s.winEval,
		Costs: s.cost, WindowSteps: s.winSteps,
		Evaluations: s.evals, TunedEvaluations: s.tunedEvals, Seconds: s.elapsed(),
	}
}

// restoreTuning takes the tuning and accounting state from a checkpoint.
func (s *sampler) restoreTuning(ck *Checkpoint) error {
	t := ck.Tuning
	n := len(s.set.Moves)
	if len(t.Widths) != n || len(t.Weights) != n || len(t.Rates) != n || len(t.WindowJumps) != n ||
		len(t.WindowEvaluations) != n || len(t.Costs) != n || len(t.WindowSteps) != n {
		return fmt.Errorf("tuning state for %d moves, settings have %d", len(t.Widths), n)
	}
	copy(s.width, t.Widths)
	copy(s.rate, t.Rates)
	copy(s.winJump, t.WindowJumps)
	copy(s.winEval, t.WindowEvaluations)
	copy(s.cost, t.Costs)
	copy(s.winSteps, t.WindowSteps)
	s.setWeights(append([]float64(nil), t.Weights...))
	s.evals, s.tunedEvals, s.seconds = t.Evaluations, t.TunedEvaluations, t.Seconds
	return nil
}

// progress assembles a progress report.
func (s *sampler) progress(began time.Time, first int, done bool) Progress {
	el := time.Since(began)
	pr := Progress{Step: s.step, Steps: s.set.Steps, Elapsed: el, Tau: math.NaN(), ETA: -1, Done: done}
	var a int
	for _, v := range s.accepted {
		a += v
	}
	if s.step > 0 {
		pr.Acceptance = float64(a) / float64(s.step*s.nw)
	}
	if s.lastTau != nil {
		pr.Tau = 0
		for _, t := range s.lastTau {
			pr.Tau = math.Max(pr.Tau, t)
		}
	}
	if sec := el.Seconds(); sec > 0 && s.step > first {
		pr.StepsPerSecond = float64(s.step-first) / sec
	}
	pr.Evaluations = s.evals
	pr.EvaluationsPerStep = s.evaluationsPerStep()
	pr.TauEvaluations = pr.Tau * pr.EvaluationsPerStep
	if done {
		pr.ETA = 0
		return pr
	}
	left := math.Inf(1)
	if s.set.Steps > 0 {
		left = float64(s.set.Steps - s.step)
	}
	if s.set.AutoStop && !math.IsNaN(pr.Tau) {
		left = math.Min(left, math.Max(0, s.set.TauFactor*pr.Tau-float64(s.step)))
	}
	if !math.IsInf(left, 1) && pr.StepsPerSecond > 0 {
		pr.ETA = time.Duration(left / pr.StepsPerSecond * float64(time.Second))
	}
	return pr
}

// result assembles the Result. A chain written to a file is handed over read
// back from the file, memory-mapped.
func (s *sampler) result() (*Result, error) {
	moveNames, _ := s.set.moveDescriptions()
	r := &Result{
		Chain:      s.chain,
		Step:       s.step,
		Status:     s.status,
		Accepted:   append([]int(nil), s.accepted...),
		Positions:  make([][]float64, s.nw),
		LogDensity: append([]float64(nil), s.lp...),
		Extra:      s.extra,
		MAP:        s.mapRes,

		Evaluations:      s.evals,
		TunedEvaluations: s.tunedEvals,
		Seconds:          s.elapsed(),
		TuneSteps:        s.set.TuneSteps,
		Widths:           append([]float64(nil), s.width...),
		Moves:            moveNames,
		Weights:          append([]float64(nil), s.weights...),
	}
	for i, x := range s.pos {
		r.Positions[i] = append([]float64(nil), x...)
	}
	if s.chain.Len() > 1 {
		tau, ok := s.estimateTau(0)
		r.Tau = tau
		var worst float64
		for _, t := range tau {
			worst = math.Max(worst, t)
		}
		r.TauReliable = ok && float64(s.step) > s.set.TauFactor*worst
	} else {
		r.Tau = make([]float64, s.dim)
		for j := range r.Tau {
			r.Tau[j] = math.NaN()
		}
	}
	if s.chain.Len() > 0 {
		r.Stuck = FlagStuck(r.AcceptanceFraction(), s.chain.LogDensitySeries(s.chain.Len()/2),
			s.set.StuckAcceptance, s.set.StuckGap)
	}
	if s.cw != nil {
		c, err := OpenChain(s.set.ChainPath)
		if err != nil {
			return nil, fmt.Errorf("mcmc: %w", err)
		}
		r.Chain = c
	}
	return r, nil
}
