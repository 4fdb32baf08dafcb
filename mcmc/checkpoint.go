package mcmc

import (
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"math"
	"os"
)

// checkpointMagic opens every checkpoint file; checkpointVersion is its layout.
const (
	checkpointMagic   = "MCMCCKPT"
	checkpointVersion = 2
	checkpointHeader  = 8 + 4 + 8 // magic, version, payload length
)

// Checkpoint is the saved state of a run: everything needed to continue the
// chain exactly, and the settings that a resumed run must share.
type Checkpoint struct {
	// Step is the number of steps taken.
	Step int
	// Seed, Walkers, Dim, Thin, Names, Moves and Weights are the settings
	// of the run that wrote the checkpoint (Moves as descriptions).
	Seed    uint64
	Walkers int
	Dim     int
	Thin    int
	Names   []string
	Moves   []string
	Weights []float64
	// Positions and LogDensity are the walkers' state, [walker][parameter]
	// and [walker].
	Positions  [][]float64
	LogDensity []float64
	// Accepted counts each walker's accepted proposals since the start.
	Accepted []int
	// Kept is the number of kept steps written to the chain file.
	Kept int
	// ChainBytes is the chain file's length at the checkpoint, header
	// included, and ChainCRC the CRC-32C (Castagnoli) of its rows (the bytes
	// after the header, which is rewritten as rows are added).
	ChainBytes int64
	ChainCRC   uint32
	// LastTau is the autocorrelation time per parameter, in steps, at the
	// last check of the automatic stopping rule (nil before the first).
	LastTau []float64
	// Converged is true when the automatic stopping rule was met at Step.
	Converged bool
	// Extra holds the caller's own bytes (see CheckpointReply.Extra).
	Extra []byte

	// Tuning is the state of the tuning and the evaluation count.
	Tuning Tuning

	walkerStreams [][]byte // MarshalBinary of each walker's PCG
	moveStream    []byte   // MarshalBinary of the move-choice PCG
}

// Tuning is the part of a checkpoint that the tuning steps change, and the
// evaluation accounting; each slice is indexed by move.
type Tuning struct {
	// Steps and Adapt are the settings' TuneSteps and AdaptWeights, which
	// a resumed run must share.
	Steps int
	Adapt bool
	// Widths are the slice widths μ (0 for moves that are not slice moves),
	// frozen after the tuning steps.
	Widths []float64
	// Weights are the normalised move weights in use, frozen after the
	// tuning steps.
	Weights []float64
	// Rates are the squared jumps per evaluation last measured (NaN when
	// never), WindowJumps and WindowEvaluations the sums of the window in
	// progress (see Settings.AdaptWeights).
	Rates, WindowJumps, WindowEvaluations []float64
	// Costs are the evaluations per step last measured (NaN when never),
	// WindowSteps the steps of the window in progress.
	Costs, WindowSteps []float64
	// Evaluations and TunedEvaluations are as in Result; Seconds is the
	// sampling time so far.
	Evaluations, TunedEvaluations int64
	Seconds                       float64
}

func (t *Tuning) encode(e *encoder) {
	e.uint(uint64(t.Steps))
	e.bool(t.Adapt)
	for _, f := range [][]float64{t.Widths, t.Weights, t.Rates, t.WindowJumps, t.WindowEvaluations, t.Costs, t.WindowSteps, {t.Seconds}} {
		e.floats(f)
	}
	e.uint(uint64(t.Evaluations))
	e.uint(uint64(t.TunedEvaluations))
}

func (t *Tuning) decode(d *decoder) {
	t.Steps, t.Adapt = d.int(), d.bool()
	t.Widths, t.Weights, t.Rates = d.floats(), d.floats(), d.floats()
	t.WindowJumps, t.WindowEvaluations = d.floats(), d.floats()
	t.Costs, t.WindowSteps = d.floats(), d.floats()
	if sec := d.floats(); len(sec) == 1 {
		t.Seconds = sec[0]
	} else if d.err == nil {
		d.err = errors.New("bad sampling time")
	}
	t.Evaluations, t.TunedEvaluations = int64(d.uint()), int64(d.uint())
}

// encode lays the checkpoint out as magic, version, payload length, payload
// and a CRC-32C of everything before it, all little-endian.
func (c *Checkpoint) encode() []byte {
	var e encoder
	e.uint(uint64(c.Step))
	e.uint(c.Seed)
	e.uint(uint64(c.Walkers))
	e.uint(uint64(c.Dim))
	e.uint(uint64(c.Thin))
	e.strings(c.Names)
	e.strings(c.Moves)
	e.floats(c.Weights)
	for _, x := range c.Positions {
		e.floats(x)
	}
	e.floats(c.LogDensity)
	for _, a := range c.Accepted {
		e.uint(uint64(a))
	}
	e.uint(uint64(c.Kept))
	e.uint(uint64(c.ChainBytes))
	e.uint(uint64(c.ChainCRC))
	e.bool(c.LastTau != nil)
	e.floats(c.LastTau)
	e.bool(c.Converged)
	e.bytes(c.Extra)
	for _, s := range c.walkerStreams {
		e.bytes(s)
	}
	e.bytes(c.moveStream)
	c.Tuning.encode(&e)

	out := make([]byte, 0, checkpointHeader+e.buf.Len()+4)
	out = append(out, checkpointMagic...)
	out = binary.LittleEndian.AppendUint32(out, checkpointVersion)
	out = binary.LittleEndian.AppendUint64(out, uint64(e.buf.Len()))
	out = append(out, e.buf.Bytes()...)
	out = binary.LittleEndian.AppendUint32(out, crc32.Checksum(out, castagnoli))
	return out
}

// decodeCheckpoint parses and verifies a checkpoint file's bytes.
func decodeCheckpoint(b []byte) (*Checkpoint, error) {
	if len(b) < checkpointHeader+4 {
		return nil, fmt.Errorf("only %d bytes: the file is truncated", len(b))
	}
	if string(b[:8]) != checkpointMagic {
		return nil, errors.New("not a checkpoint file of this sampler")
	}
	n := binary.LittleEndian.Uint64(b[12:20])
	if uint64(len(b)) != checkpointHeader+n+4 {
		if uint64(len(b)) < checkpointHeader+n+4 {
			return nil, fmt.Errorf("%d bytes where the header announces %d: the file is truncated", len(b), checkpointHeader+n+4)
		}
		return nil, fmt.Errorf("%d bytes where the header announces %d: the file is corrupted", len(b), checkpointHeader+n+4)
	}
	body := b[:len(b)-4]
	if crc32.Checksum(body, castagnoli) != binary.LittleEndian.Uint32(b[len(b)-4:]) {
		return nil, errors.New("checksum mismatch: the file is corrupted")
	}
	if v := binary.LittleEndian.Uint32(b[8:12]); v != checkpointVersion {
		return nil, fmt.Errorf("layout version %d, this sampler reads version %d", v, checkpointVersion)
	}
	d := decoder{b: body[checkpointHeader:]}
	c := &Checkpoint{}
	c.Step = d.int()
	c.Seed = d.uint()
	c.Walkers = d.int()
	c.Dim = d.int()
	c.Thin = d.int()
	if d.err == nil && (c.Walkers > 1<<24 || c.Dim > 1<<24) {
		d.err = errors.New("implausible sizes")
	}
	c.Names = d.strings()
	c.Moves = d.strings()
	c.Weights = d.floats()
	c.Positions = make([][]float64, 0, c.Walkers)
	for i := 0; i < c.Walkers && d.err == nil; i++ {
		c.Positions = append(c.Positions, d.floats())
	}
	c.LogDensity = d.floats()
	c.Accepted = make([]int, 0, c.Walkers)
	for i := 0; i < c.Walkers && d.err == nil; i++ {
		c.Accepted = append(c.Accepted, d.int())
	}
	c.Kept = d.int()
	c.ChainBytes = int64(d.uint())
	c.ChainCRC = uint32(d.uint())
	hasTau := d.bool()
	c.LastTau = d.floats()
	if !hasTau {
		c.LastTau = nil
	}
	c.Converged = d.bool()
	c.Extra = d.bytes()
	for i := 0; i < c.Walkers && d.err == nil; i++ {
		c.walkerStreams = append(c.walkerStreams, d.bytes())
	}
	c.moveStream = d.bytes()
	c.Tuning.decode(&d)
	if d.err == nil && len(d.b) != 0 {
		d.err = fmt.Errorf("%d unexpected bytes at the end", len(d.b))
	}
	if d.err != nil {
		return nil, fmt.Errorf("malformed contents: %w", d.err)
	}
	for i, x := range c.Positions {
		if len(x) != c.Dim {
			return nil, fmt.Errorf("malformed contents: walker %d has %d coordinates, want %d", i, len(x), c.Dim)
		}
	}
	if len(c.LogDensity) != c.Walkers || len(c.Names) != c.Dim || len(c.Moves) != len(c.Weights) {
		return nil, errors.New("malformed contents: inconsistent sizes")
	}
	return c, nil
}

// LoadCheckpoint reads and verifies the checkpoint file at path. A file that
// is truncated or whose checksum does not match is refused with an error
// naming it. Callers use it to recover their own state (Extra) before
// resuming a run.
func LoadCheckpoint(path string) (*Checkpoint, error) {
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("reading checkpoint: %w", err)
	}
	c, err := decodeCheckpoint(b)
	if err != nil {
		return nil, fmt.Errorf("checkpoint %s: %w", path, err)
	}
	return c, nil
}

// encoder writes unsigned varints, float64 bit patterns and length-prefixed
// byte strings.
type encoder struct{ buf bytes.Buffer }

func (e *encoder) uint(v uint64) {
	var b [binary.MaxVarintLen64]byte
	e.buf.Write(b[:binary.PutUvarint(b[:], v)])
}

func (e *encoder) bool(v bool) {
	if v {
		e.uint(1)
	} else {
		e.uint(0)
	}
}

func (e *encoder) floats(x []float64) {
	e.uint(uint64(len(x)))
	var b [8]byte
	for _, v := range x {
		binary.LittleEndian.PutUint64(b[:], math.Float64bits(v))
		e.buf.Write(b[:])
	}
}

func (e *encoder) bytes(p []byte) {
	e.uint(uint64(len(p)))
	e.buf.Write(p)
}

func (e *encoder) strings(s []string) {
	e.uint(uint64(len(s)))
	for _, v := range s {
		e.bytes([]byte(v))
	}
}

// decoder reads what encoder wrote; the first error sticks.
type decoder struct {
	b   []byte
	err error
}

func (d *decoder) uint() uint64 {
	if d.err != nil {
		return 0
	}
	v, n := binary.Uvarint(d.b)
	if n <= 0 {
		d.err = errors.New("bad integer")
		return 0
	}
	d.b = d.b[n:]
	return v
}

func (d *decoder) int() int {
	v := d.uint()
	if v > math.MaxInt32*uint64(1<<16) {
		if d.err == nil {
			d.err = errors.New("integer out of range")
		}
		return 0
	}
	return int(v)
}

func (d *decoder) bool() bool { return d.uint() != 0 }

func (d *decoder) length(size int) int {
	n := d.uint()
	if d.err == nil && n > uint64(len(d.b)/size) {
		d.err = errors.New("length beyond the end of the data")
	}
	if d.err != nil {
		return 0
	}
	return int(n)
}

func (d *decoder) floats() []float64 {
	n := d.length(8)
	if d.err != nil {
		return nil
	}
	x := make([]float64, n)
	for i := range x {
		x[i] = math.Float64frombits(binary.LittleEndian.Uint64(d.b[8*i:]))
	}
	d.b = d.b[8*n:]
	return x
}

func (d *decoder) bytes() []byte {
	n := d.length(1)
	if d.err != nil {
		return nil
	}
	p := append([]byte(nil), d.b[:n]...)
	d.b = d.b[n:]
	return p
}

func (d *decoder) strings() []string {
	n := d.length(1)
	if d.err != nil {
		return nil
	}
	s := make([]string, 0, n)
	for i := 0; i < n && d.err == nil; i++ {
		s = append(s, string(d.bytes()))
	}
	return s
}
