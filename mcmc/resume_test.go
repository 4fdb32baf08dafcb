package mcmc

import (
	"bytes"
	"context"
	"encoding/binary"
	"hash/crc32"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strings"
	"testing"
	"time"
)

// The reference for every test in this file is the sampler's own
// uninterrupted run: the package promises (see the package documentation)
// that the chain does not depend on the number of threads and that a run
// stopped and resumed at any step writes the same bytes.

// clipped is a banana with a hard edge, so that some proposals fall outside
// the support (log-density −Inf) and are rejected.
func clipped(x []float64) float64 {
	if x[0] < -1.5 {
		return math.Inf(-1)
	}
	return bananaLogDensity(x)
}

var mixture = []WeightedMove{
	{Move: StretchMove{}, Weight: 2},
	{Move: DifferentialMove{JumpProbability: 0.1}, Weight: 1},
	{Move: WalkMove{Subset: 4}, Weight: 1},
}

// testSettings returns settings writing into dir.
func testSettings(dir string, steps int) *Settings {
	return &Settings{
		Seed: 424242, Walkers: 32, Steps: steps, Moves: mixture, Names: []string{"a", "b"},
		ChainPath:       filepath.Join(dir, "chain.npy"),
		CheckpointPath:  filepath.Join(dir, "state.ckpt"),
		CheckpointEvery: 10,
		AutoStop:        false, Thin: 1,
	}
}

var testStart = Start{Center: []float64{0.5, 0.5}, Scale: []float64{0.3, 0.3}}

func readFile(t *testing.T, path string) []byte {
	t.Helper()
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

// uninterrupted runs the reference chain of the given length and returns
// the chain file's bytes.
func uninterrupted(t *testing.T, steps int, edit func(*Settings)) []byte {
	t.Helper()
	dir := t.TempDir()
	s := testSettings(dir, steps)
	if edit != nil {
		edit(s)
	}
	res := mustRun(t, Problem{clipped, 2}, testStart, s)
	if res.Status != StepLimit || res.Step != steps {
		t.Fatalf("reference run: status %v at step %d", res.Status, res.Step)
	}
	return readFile(t, s.ChainPath)
}

func TestThreadsGiveIdenticalChains(t *testing.T) {
	var ref []byte
	var refChain *Chain
	for _, threads := range []int{1, 2, 8} {
		dir := t.TempDir()
		s := testSettings(dir, 60)
		s.Threads = threads
		res := mustRun(t, Problem{clipped, 2}, testStart, s)
		b := readFile(t, s.ChainPath)
		if ref == nil {
			ref, refChain = b, res.Chain
			continue
		}
		if !bytes.Equal(b, ref) {
			t.Errorf("%d threads: chain file differs from the 1-thread chain", threads)
		}
		if !sameChain(res.Chain, refChain) {
			t.Errorf("%d threads: the chain read back differs from the 1-thread chain", threads)
		}
	}
	// The chain file read back equals the chain written through CSV and
	// read back, bit for bit (CSV numbers are the shortest round-trip form).
	var buf bytes.Buffer
	if err := WriteChain(&buf, refChain, []string{"test chain"}); err != nil {
		t.Fatal(err)
	}
	back, err := ReadChain(&buf)
	if err != nil {
		t.Fatal(err)
	}
	if !sameChain(back, refChain) || back.Len() != 60 {
		t.Errorf("chain through CSV differs from the chain file (%d rows)", back.Len())
	}
	if !sameChain(chainOf(t, ref), refChain) {
		t.Error("the chain file opened afresh differs from the run's result")
	}
}

// chainOf opens chain-file bytes as a chain.
func chainOf(t *testing.T, b []byte) *Chain {
	t.Helper()
	path := filepath.Join(t.TempDir(), "chain.npy")
	if err := os.WriteFile(path, b, 0o644); err != nil {
		t.Fatal(err)
	}
	c, err := OpenChain(path)
	if err != nil {
		t.Fatal(err)
	}
	t.Cleanup(func() { c.Close() })
	return c
}

func sameChain(a, b *Chain) bool {
	if !slices.Equal(a.Names, b.Names) || a.Len() != b.Len() || a.Walkers() != b.Walkers() {
		return false
	}
	var x, y []float64
	for k := range a.Len() {
		if a.Step(k) != b.Step(k) {
			return false
		}
		for w := range a.Walkers() {
			if math.Float64bits(a.LogDensity(k, w)) != math.Float64bits(b.LogDensity(k, w)) {
				return false
			}
			x, y = a.Position(k, w, x), b.Position(k, w, y)
			for j := range x {
				if math.Float64bits(x[j]) != math.Float64bits(y[j]) {
					return false
				}
			}
		}
	}
	return true
}

// A run of 17 steps resumed to 40 equals a run of 40 steps.
func TestResumeAtOddStep(t *testing.T) {
	ref := uninterrupted(t, 40, nil)
	dir := t.TempDir()
	s := testSettings(dir, 17)
	r1 := mustRun(t, Problem{clipped, 2}, testStart, s)
	if r1.Step != 17 || r1.Status != StepLimit {
		t.Fatalf("first part: step %d, status %v", r1.Step, r1.Status)
	}
	s.Steps, s.Resume = 40, true
	s.Threads = 1 // the thread count may change on resume
	r2 := mustRun(t, Problem{clipped, 2}, Start{}, s)
	if r2.Step != 40 {
		t.Fatalf("resumed run stopped at step %d", r2.Step)
	}
	if got := readFile(t, s.ChainPath); !bytes.Equal(got, ref) {
		t.Fatalf("resumed chain file (%d bytes) differs from the uninterrupted one (%d bytes)", len(got), len(ref))
	}
	if r2.Chain.Len() != 40 || r2.Chain.Step(0) != 1 {
		t.Errorf("resumed result holds %d rows from step %d, want 40 from step 1", r2.Chain.Len(), r2.Chain.Step(0))
	}
	// Resuming a finished run returns at once.
	r3 := mustRun(t, Problem{clipped, 2}, Start{}, s)
	if r3.Step != 40 || r3.Status != StepLimit {
		t.Errorf("resuming a finished run: step %d, status %v", r3.Step, r3.Status)
	}
	if got := readFile(t, s.ChainPath); !bytes.Equal(got, ref) {
		t.Error("resuming a finished run changed the chain file")
	}
}

// Cancelling the context stops the run cleanly with a checkpoint; resuming
// gives the uninterrupted chain. The same with a tiny time budget, which
// stops after every single step.
func TestCancelAndTimeBudgetResume(t *testing.T) {
	ref := uninterrupted(t, 40, nil)

	dir := t.TempDir()
	s := testSettings(dir, 40)
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	s.ProgressEvery = 1
	s.Progress = func(p Progress) {
		if p.Step == 23 {
			cancel()
		}
	}
	r, err := Run(ctx, Problem{clipped, 2}, testStart, s)
	if err != nil {
		t.Fatal(err)
	}
	if r.Status != Cancelled || r.Step != 23 {
		t.Fatalf("cancelled run: status %v at step %d, want cancelled at 23", r.Status, r.Step)
	}
	ck, err := LoadCheckpoint(s.CheckpointPath)
	if err != nil {
		t.Fatal(err)
	}
	if ck.Step != 23 {
		t.Fatalf("checkpoint after cancellation is at step %d, want 23", ck.Step)
	}
	s.Progress, s.Resume = nil, true
	mustRun(t, Problem{clipped, 2}, Start{}, s)
	if !bytes.Equal(readFile(t, s.ChainPath), ref) {
		t.Error("chain resumed after cancellation differs from the uninterrupted one")
	}

	dir = t.TempDir()
	s = testSettings(dir, 40)
	s.MaxDuration = time.Nanosecond
	s.Resume = true // no checkpoint yet: starts afresh
	calls := 0
	for {
		calls++
		if calls > 100 {
			t.Fatal("time-budget runs do not finish")
		}
		r := mustRun(t, Problem{clipped, 2}, testStart, s)
		if r.Status == StepLimit {
			break
		}
		if r.Status != TimeLimit {
			t.Fatalf("status %v, want the time limit", r.Status)
		}
	}
	if calls != 40 {
		t.Errorf("%d calls with a 1 ns budget, want 40 (one step each)", calls)
	}
	if !bytes.Equal(readFile(t, s.ChainPath), ref) {
		t.Error("chain built one step per call differs from the uninterrupted one")
	}
}

// A target that changes at the regular checkpoints (as a refined quadrature
// would): the hook reports the change, the sampler re-evaluates every walker,
// and the caller's bytes stored in the checkpoint restore the target's state
// on resume. The resumed chain must equal the uninterrupted one, and every
// row's log-density must be that of the target version in force at its step.
func TestCheckpointHookTargetChange(t *testing.T) {
	type target struct{ version byte }
	logDensity := func(tg *target) func(x []float64) float64 {
		return func(x []float64) float64 {
			// Version v tempers the banana by 1/(1+v).
			return clipped(x) / (1 + float64(tg.version))
		}
	}
	hook := func(tg *target) func(CheckpointEvent) (CheckpointReply, error) {
		return func(ev CheckpointEvent) (CheckpointReply, error) {
			if ev.Final || ev.Step == 0 || tg.version >= 3 {
				return CheckpointReply{Extra: []byte{tg.version}}, nil
			}
			tg.version++
			return CheckpointReply{TargetChanged: true, Extra: []byte{tg.version}}, nil
		}
	}
	run := func(s *Settings, tg *target) *Result {
		s.OnCheckpoint = hook(tg)
		return mustRun(t, Problem{logDensity(tg), 2}, testStart, s)
	}
	refDir := t.TempDir()
	refTarget := &target{}
	ref := run(testSettings(refDir, 40), refTarget)
	if !bytes.Equal(ref.Extra, []byte{3}) {
		t.Fatalf("result extra bytes %v, want [3]", ref.Extra)
	}
	// Versions: steps 1–10 under 0, 11–20 under 1, 21–30 under 2, 31– under 3.
	for k, step := range ref.Chain.Steps() {
		v := float64(min(3, (step-1)/10))
		for w := range ref.Chain.Walkers() {
			want := clipped(ref.Chain.Position(k, w, nil)) / (1 + v)
			if got := ref.Chain.LogDensity(k, w); got != want {
				t.Fatalf("step %d walker %d: log-density %v, want %v from target version %v", step, w, got, want, v)
			}
		}
	}

	dir := t.TempDir()
	s := testSettings(dir, 40)
	s.ProgressEvery = 1
	ctx, cancel := context.WithCancel(context.Background())
	defer cancel()
	s.Progress = func(p Progress) {
		if p.Step == 27 {
			cancel()
		}
	}
	tg := &target{}
	s.OnCheckpoint = hook(tg)
	if _, err := Run(ctx, Problem{logDensity(tg), 2}, testStart, s); err != nil {
		t.Fatal(err)
	}
	// A new process: the target's state comes back from the checkpoint.
	ck, err := LoadCheckpoint(s.CheckpointPath)
	if err != nil {
		t.Fatal(err)
	}
	if ck.Step != 27 || len(ck.Extra) != 1 {
		t.Fatalf("checkpoint at step %d with extra %v", ck.Step, ck.Extra)
	}
	tg2 := &target{version: ck.Extra[0]}
	s.Progress, s.Resume = nil, true
	run(s, tg2)
	if !bytes.Equal(readFile(t, s.ChainPath), readFile(t, filepath.Join(refDir, "chain.npy"))) {
		t.Error("resumed chain with target changes differs from the uninterrupted one")
	}
}

func TestCorruptCheckpointRefused(t *testing.T) {
	dir := t.TempDir()
	s := testSettings(dir, 17)
	mustRun(t, Problem{clipped, 2}, testStart, s)
	good := readFile(t, s.CheckpointPath)
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"flipped byte", flip(good, len(good)/2), "checksum"},
		{"flipped checksum", flip(good, len(good)-1), "checksum"},
		{"truncated", good[:len(good)-7], "truncated"},
		{"header only", good[:10], "truncated"},
		{"other file", []byte("step,walker,log_density,a,b\n1,0,0,0,0\n"), "not a checkpoint"},
	} {
		t.Run(c.name, func(t *testing.T) {
			if err := os.WriteFile(s.CheckpointPath, c.data, 0o644); err != nil {
				t.Fatal(err)
			}
			_, err := LoadCheckpoint(s.CheckpointPath)
			if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), s.CheckpointPath) {
				t.Errorf("LoadCheckpoint: %v, want an error naming the file and saying %q", err, c.want)
			}
			s2 := *s
			s2.Resume, s2.Steps = true, 40
			_, err = Run(context.Background(), Problem{clipped, 2}, Start{}, &s2)
			if err == nil || !strings.Contains(err.Error(), s.CheckpointPath) {
				t.Errorf("Run: %v, want an error naming the checkpoint", err)
			}
		})
	}
}

func flip(b []byte, i int) []byte {
	c := append([]byte(nil), b...)
	c[i] ^= 0x10
	return c
}

// A crash leaves rows after the last checkpoint and a partial last record;
// resuming cuts the chain file back to the checkpoint and continues exactly.
// A chain file damaged or shortened before that point is refused.
func TestChainFileCutBackOnResume(t *testing.T) {
	ref := uninterrupted(t, 40, nil)
	dir := t.TempDir()
	s := testSettings(dir, 40)
	// The hook fails at step 30, after the rows of steps 21–30 are written
	// but before the checkpoint of step 30: the last checkpoint is step 20.
	s.OnCheckpoint = func(ev CheckpointEvent) (CheckpointReply, error) {
		if ev.Step == 30 {
			return CheckpointReply{}, os.ErrDeadlineExceeded
		}
		return CheckpointReply{}, nil
	}
	if _, err := Run(context.Background(), Problem{clipped, 2}, testStart, s); err == nil {
		t.Fatal("want the hook's error")
	}
	ck, err := LoadCheckpoint(s.CheckpointPath)
	if err != nil {
		t.Fatal(err)
	}
	if ck.Step != 20 {
		t.Fatalf("last checkpoint at step %d, want 20", ck.Step)
	}
	f, err := os.OpenFile(s.ChainPath, os.O_APPEND|os.O_WRONLY, 0)
	if err != nil {
		t.Fatal(err)
	}
	f.Write(appendRecord(nil, 31, 0, -1.5, []float64{0.25})) // a record cut short
	f.Close()
	if size := int64(len(readFile(t, s.ChainPath))); size <= ck.ChainBytes {
		t.Fatalf("chain file has %d bytes, checkpoint %d: no rows beyond it", size, ck.ChainBytes)
	}
	// Meanwhile the header vouches for the rows of the last checkpoint only,
	// so readers (this package's, or NumPy's) see a consistent chain.
	if c, err := ReadChainFile(s.ChainPath); err != nil || c.Len() != 20 {
		t.Errorf("reading the chain file after the crash: %v; want the 20 checkpointed rows", err)
	}
	damaged := readFile(t, s.ChainPath)
	// A reader (report, plot) has the crashed file memory-mapped while the fit resumes.
	mapped, err := OpenChain(s.ChainPath)
	if err != nil {
		t.Fatal(err)
	}
	defer mapped.Close()
	before, _ := os.Stat(s.ChainPath)
	s.OnCheckpoint, s.Resume = nil, true
	mustRun(t, Problem{clipped, 2}, Start{}, s)
	// The cut goes to a new file: the reader's old one keeps every page it mapped.
	if after, _ := os.Stat(s.ChainPath); os.SameFile(before, after) {
		t.Error("the chain file was cut back in place: a reader's memory map of it loses pages")
	}
	if got := mapped.LogDensity(mapped.Len()-1, 1); got != chainOf(t, damaged).LogDensity(19, 1) {
		t.Errorf("the old mapping reads %v in its last row, want the crashed file's value", got)
	}
	if !bytes.Equal(readFile(t, s.ChainPath), ref) {
		t.Error("chain resumed after a crash differs from the uninterrupted one")
	}

	// Damage before the checkpoint's length is refused, naming the file.
	for _, c := range []struct {
		name string
		data []byte
		want string
	}{
		{"changed byte", flip(damaged, int(ck.ChainBytes)/2), "CRC"},
		{"shortened", damaged[:ck.ChainBytes-5], "truncated"},
	} {
		t.Run(c.name, func(t *testing.T) {
			dir := t.TempDir()
			s2 := *s
			s2.ChainPath = filepath.Join(dir, "chain.npy")
			s2.CheckpointPath = filepath.Join(dir, "state.ckpt")
			// Rebuild the step-20 checkpoint beside the damaged file.
			os.WriteFile(s2.CheckpointPath, ck.encode(), 0o644)
			os.WriteFile(s2.ChainPath, c.data, 0o644)
			_, err := Run(context.Background(), Problem{clipped, 2}, Start{}, &s2)
			if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), s2.ChainPath) {
				t.Errorf("got %v, want an error naming %s and saying %q", err, s2.ChainPath, c.want)
			}
		})
	}
}

func TestResumeRefusesOtherSettings(t *testing.T) {
	dir := t.TempDir()
	s := testSettings(dir, 12)
	mustRun(t, Problem{clipped, 2}, testStart, s)
	for _, c := range []struct {
		name string
		edit func(*Settings)
		want string
	}{
		{"seed", func(s *Settings) { s.Seed++ }, "seed"},
		{"walkers", func(s *Settings) { s.Walkers = 16 }, "walkers"},
		{"names", func(s *Settings) { s.Names = []string{"a", "c"} }, "parameters"},
		{"moves", func(s *Settings) { s.Moves = nil }, "moves"},
		{"thin", func(s *Settings) { s.Thin = 2 }, "thinning"},
	} {
		s2 := *s
		s2.Resume, s2.Steps = true, 20
		c.edit(&s2)
		_, err := Run(context.Background(), Problem{clipped, 2}, Start{}, &s2)
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s changed: %v, want an error about %s", c.name, err, c.want)
		}
	}
}

// Thinning: a thinned run keeps steps Thin, 2·Thin, …, and resumes exactly.
func TestThinnedResume(t *testing.T) {
	thin := func(s *Settings) { s.Thin = 3 }
	ref := uninterrupted(t, 31, thin)
	back := chainOf(t, ref)
	if back.Len() != 10 || back.Step(0) != 3 || back.Step(9) != 30 {
		t.Fatalf("thinned chain holds %d rows, steps %v", back.Len(), back.Steps())
	}
	dir := t.TempDir()
	s := testSettings(dir, 13)
	thin(s)
	mustRun(t, Problem{clipped, 2}, testStart, s)
	s.Steps, s.Resume = 31, true
	mustRun(t, Problem{clipped, 2}, Start{}, s)
	if !bytes.Equal(readFile(t, s.ChainPath), ref) {
		t.Error("thinned resumed chain differs from the uninterrupted one")
	}
}

// The checkpoint layout: magic, version, length, payload, CRC-32C of all
// before it (as documented in the package documentation).
func TestCheckpointLayout(t *testing.T) {
	dir := t.TempDir()
	s := testSettings(dir, 5)
	mustRun(t, Problem{clipped, 2}, testStart, s)
	b := readFile(t, s.CheckpointPath)
	if string(b[:8]) != "MCMCCKPT" {
		t.Errorf("magic %q", b[:8])
	}
	n := binary.LittleEndian.Uint64(b[12:20])
	if uint64(len(b)) != 20+n+4 {
		t.Errorf("length field %d, file %d bytes", n, len(b))
	}
	// CRC-32C of "123456789" is 0xE3069283 (the check value of the
	// Castagnoli polynomial: Castagnoli, Bräuer & Herrmann 1993, IEEE Trans.
	// Commun. 41, 883; RFC 3720 appendix B.4).
	if got := crc32c([]byte("123456789")); got != 0xE3069283 {
		t.Errorf("CRC-32C check value %#x, want 0xE3069283", got)
	}
	if binary.LittleEndian.Uint32(b[len(b)-4:]) != crc32c(b[:len(b)-4]) {
		t.Error("stored checksum is not the CRC-32C of the preceding bytes")
	}
}

func crc32c(b []byte) uint32 { return crc32.Checksum(b, castagnoli) }
