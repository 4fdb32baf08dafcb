package mcmc

import (
	"bufio"
	"encoding/binary"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
)

// Fixed leading columns of a chain file; the parameter columns follow.
const (
	colStep       = "step"
	colWalker     = "walker"
	colLogDensity = "log_density"
)

// Chain is a sampled chain: the position and log-density of every walker at every kept
// step. Its rows are held in memory (NewChain, ReadChain, MergeChains) or read on demand
// from a chain file mapped into memory (OpenChain, and the Result of a run that writes a
// chain file), so that a long chain costs no memory of its own. Values are copied out by
// the methods; a Chain is safe for concurrent reading.
type Chain struct {
	// Names are the parameter names, one per coordinate.
	Names []string

	walkers int
	rows    int
	rec     int         // bytes per record: step, walker, log-density, then the coordinates
	mem     []byte      // the records, for a chain in memory
	src     io.ReaderAt // the records, for a chain read from a file
	base    int64       // offset of the first record in src
	closer  io.Closer
}

// NewChain returns an empty chain in memory of the given parameter names and walkers, to
// be filled with Append.
func NewChain(names []string, walkers int) *Chain {
	return &Chain{Names: append([]string(nil), names...), walkers: walkers, rec: recordSize(len(names))}
}

// recordSize is the byte length of one walker's record with n coordinates: the step and
// the walker as int64, the log-density and the coordinates as float64.
func recordSize(n int) int { return 8 * (3 + n) }

// Len returns the number of kept rows.
func (c *Chain) Len() int { return c.rows }

// Walkers returns the number of walkers.
func (c *Chain) Walkers() int { return c.walkers }

// Dim returns the number of parameters.
func (c *Chain) Dim() int { return len(c.Names) }

// Append adds one kept step to a chain in memory: walker k is at pos[k] with log-density
// lp[k].
func (c *Chain) Append(step int, pos [][]float64, lp []float64) error {
	if c.src != nil {
		return errors.New("appending to a chain read from a file")
	}
	if len(pos) != c.walkers || len(lp) != c.walkers {
		return fmt.Errorf("step %d has %d positions and %d log-densities for %d walkers", step, len(pos), len(lp), c.walkers)
	}
	for k, x := range pos {
		if len(x) != c.Dim() {
			return fmt.Errorf("step %d walker %d has %d values for %d parameters", step, k, len(x), c.Dim())
		}
		c.mem = appendRecord(c.mem, step, k, lp[k], x)
	}
	c.rows++
	return nil
}

// appendRecord appends one walker's record, little-endian.
func appendRecord(b []byte, step, walker int, lp float64, x []float64) []byte {
	b = binary.LittleEndian.AppendUint64(b, uint64(step))
	b = binary.LittleEndian.AppendUint64(b, uint64(walker))
	b = binary.LittleEndian.AppendUint64(b, math.Float64bits(lp))
	for _, v := range x {
		b = binary.LittleEndian.AppendUint64(b, math.Float64bits(v))
	}
	return b
}

// read returns the bytes of rows [t, t+n) of the chain, in buf if it is large enough.
func (c *Chain) read(t, n int, buf []byte) []byte {
	size := n * c.walkers * c.rec
	off := t * c.walkers * c.rec
	if c.src == nil {
		return c.mem[off : off+size]
	}
	if cap(buf) < size {
		buf = make([]byte, size)
	}
	buf = buf[:size]
	if _, err := c.src.ReadAt(buf, c.base+int64(off)); err != nil {
		// The records were checked when the chain was opened; a failing read
		// is a failing disk, which the caller cannot mend.
		panic(fmt.Sprintf("mcmc: reading chain rows %d–%d: %v", t, t+n-1, err))
	}
	return buf
}

func field(b []byte, i int) uint64 { return binary.LittleEndian.Uint64(b[8*i:]) }

// Step returns the step number (counted from 1) of kept row t.
func (c *Chain) Step(t int) int { return int(field(c.read(t, 1, nil), 0)) }

// Steps returns the step numbers of the kept rows.
func (c *Chain) Steps() []int {
	out := make([]int, c.rows)
	var buf []byte
	for t := range out {
		buf = c.read(t, 1, buf)
		out[t] = int(field(buf, 0))
	}
	return out
}

// LogDensity returns the log-density of walker k at kept row t.
func (c *Chain) LogDensity(t, k int) float64 {
	b := c.read(t, 1, nil)[k*c.rec:]
	return math.Float64frombits(field(b, 2))
}

// Position copies the position of walker k at kept row t into dst, which is grown if
// needed, and returns it.
func (c *Chain) Position(t, k int, dst []float64) []float64 {
	b := c.read(t, 1, nil)[k*c.rec:]
	dst = slices.Grow(dst[:0], c.Dim())[:c.Dim()]
	for j := range dst {
		dst[j] = math.Float64frombits(field(b, 3+j))
	}
	return dst
}

// Positions copies the positions of every walker at kept row t into dst (indexed
// [walker][parameter]), which is grown if needed, and returns it. The row is read once.
func (c *Chain) Positions(t int, dst [][]float64) [][]float64 {
	b := c.read(t, 1, nil)
	dst = slices.Grow(dst[:0], c.walkers)[:c.walkers]
	for k := range dst {
		dst[k] = slices.Grow(dst[k][:0], c.Dim())[:c.Dim()]
		rec := b[k*c.rec:]
		for j := range dst[k] {
			dst[k][j] = math.Float64frombits(field(rec, 3+j))
		}
	}
	return dst
}

// rowsPerRead is how many kept rows the bulk readers copy at once.
const rowsPerRead = 64

// each calls fn(t, k, record) for every walker of every kept row from first on.
func (c *Chain) each(first int, fn func(t, k int, rec []byte)) {
	var buf []byte
	for t := max(first, 0); t < c.rows; t += rowsPerRead {
		n := min(rowsPerRead, c.rows-t)
		buf = c.read(t, n, buf)
		for r := range n {
			for k := range c.walkers {
				off := (r*c.walkers + k) * c.rec
				fn(t+r, k, buf[off:off+c.rec])
			}
		}
	}
}

// clampBurn limits burn to [0, Len].
func (c *Chain) clampBurn(burn int) int { return min(max(burn, 0), c.rows) }

// Series returns the trace of parameter j for every walker, indexed
// [walker][kept row], leaving out the first burn kept rows. The slices are
// new; the chain is not modified.
func (c *Chain) Series(j, burn int) [][]float64 {
	return c.column(3+j, burn)
}

// seriesEvery is Series(j, 0) thinned to kept rows f−1, 2f−1, …; only those rows
// are read, which keeps the estimates during a long run cheap.
func (c *Chain) seriesEvery(j, f int) [][]float64 {
	if f <= 1 {
		return c.Series(j, 0)
	}
	n := c.rows / f
	out := make([][]float64, c.walkers)
	flat := make([]float64, c.walkers*n)
	for k := range out {
		out[k] = flat[k*n : (k+1)*n : (k+1)*n]
	}
	var buf []byte
	for m := range n {
		buf = c.read((m+1)*f-1, 1, buf)
		for k := range c.walkers {
			out[k][m] = math.Float64frombits(field(buf[k*c.rec:], 3+j))
		}
	}
	return out
}

// LogDensitySeries returns the log-density trace of every walker, indexed
// [walker][kept row], leaving out the first burn kept rows.
func (c *Chain) LogDensitySeries(burn int) [][]float64 {
	return c.column(2, burn)
}

func (c *Chain) column(i, burn int) [][]float64 {
	burn = c.clampBurn(burn)
	n := c.rows - burn
	out := make([][]float64, c.walkers)
	flat := make([]float64, c.walkers*n)
	for k := range out {
		out[k] = flat[k*n : (k+1)*n : (k+1)*n]
	}
	c.each(burn, func(t, k int, rec []byte) {
		out[k][t-burn] = math.Float64frombits(field(rec, i))
	})
	return out
}

// Samples returns the kept positions after the first burn kept rows as one
// flat sample, indexed [sample][parameter], walker by walker within each row.
// The rows share no memory with the chain.
func (c *Chain) Samples(burn int) [][]float64 {
	burn = c.clampBurn(burn)
	n := c.Dim()
	out := make([][]float64, 0, (c.rows-burn)*c.walkers)
	flat := make([]float64, (c.rows-burn)*c.walkers*n)
	c.each(burn, func(t, k int, rec []byte) {
		row := flat[:n:n]
		flat = flat[n:]
		for j := range row {
			row[j] = math.Float64frombits(field(rec, 3+j))
		}
		out = append(out, row)
	})
	return out
}

// Close releases the file behind a chain read from one; the chain may not be used
// afterwards. It does nothing for a chain in memory.
func (c *Chain) Close() error {
	if c.closer == nil {
		return nil
	}
	err := c.closer.Close()
	c.closer, c.src, c.rows = nil, nil, 0
	return err
}

// MergeChains places the walkers of several chains side by side in one chain
// in memory, for instance to summarise independent runs together. All chains
// must have the same parameter names; the walker counts may differ. The result
// holds the kept steps common to all, which must come in the same order, and
// is cut to the shortest chain.
func MergeChains(chains ...*Chain) (*Chain, error) {
	if len(chains) == 0 {
		return nil, errors.New("merging chains: no chains")
	}
	first := chains[0]
	rows, walkers := first.Len(), 0
	for i, c := range chains {
		if !slices.Equal(c.Names, first.Names) {
			return nil, fmt.Errorf("merging chains: chain %d has parameters %v, chain 0 has %v", i, c.Names, first.Names)
		}
		rows = min(rows, c.Len())
		walkers += c.Walkers()
	}
	steps := first.Steps()
	for i, c := range chains {
		for t, s := range c.Steps()[:rows] {
			if s != steps[t] {
				return nil, fmt.Errorf("merging chains: row %d is step %d in chain %d but step %d in chain 0", t, s, i, steps[t])
			}
		}
	}
	out := NewChain(first.Names, walkers)
	pos := make([][]float64, 0, walkers)
	lp := make([]float64, 0, walkers)
	for t := 0; t < rows; t++ {
		pos, lp = pos[:0], lp[:0]
		for _, c := range chains {
			for k := range c.Walkers() {
				pos = append(pos, c.Position(t, k, nil))
				lp = append(lp, c.LogDensity(t, k))
			}
		}
		if err := out.Append(steps[t], pos, lp); err != nil {
			return nil, fmt.Errorf("merging chains: %w", err)
		}
	}
	return out, nil
}

// checkNames reports whether names can serve as chain-file column headers.
func checkNames(names []string, dim int) error {
	if len(names) != dim {
		return fmt.Errorf("%d parameter names for %d parameters", len(names), dim)
	}
	seen := map[string]bool{colStep: true, colWalker: true, colLogDensity: true}
	for i, s := range names {
		switch {
		case s == "":
			return fmt.Errorf("parameter %d has an empty name", i)
		case strings.ContainsAny(s, ",\"\r\n") || strings.TrimSpace(s) != s:
			return fmt.Errorf("parameter name %q: names may not contain commas, quotes, line breaks or surrounding spaces", s)
		case seen[s]:
			return fmt.Errorf("parameter name %q is used twice or clashes with a fixed column", s)
		}
		seen[s] = true
	}
	return nil
}

// appendHeader appends the comment lines and the header line of a chain file.
func appendHeader(b []byte, comments, names []string) []byte {
	for _, c := range comments {
		for _, line := range strings.Split(c, "\n") {
			b = append(b, "# "...)
			b = append(b, strings.TrimRight(line, "\r")...)
			b = append(b, '\n')
		}
	}
	b = append(b, colStep+","+colWalker+","+colLogDensity...)
	for _, s := range names {
		b = append(b, ',')
		b = append(b, s...)
	}
	return append(b, '\n')
}

// appendRow appends one chain-file row.
func appendRow(b []byte, step, walker int, lp float64, x []float64) []byte {
	b = strconv.AppendInt(b, int64(step), 10)
	b = append(b, ',')
	b = strconv.AppendInt(b, int64(walker), 10)
	b = append(b, ',')
	b = strconv.AppendFloat(b, lp, 'g', -1, 64)
	for _, v := range x {
		b = append(b, ',')
		b = strconv.AppendFloat(b, v, 'g', -1, 64)
	}
	return append(b, '\n')
}

// WriteChain writes a chain as CSV (see the package documentation), with the
// given comment lines at the top; for example to hand chains merged with
// MergeChains to tools that read text.
func WriteChain(w io.Writer, c *Chain, comments []string) error {
	if err := checkNames(c.Names, len(c.Names)); err != nil {
		return fmt.Errorf("writing chain: %w", err)
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	if _, err := bw.Write(appendHeader(nil, comments, c.Names)); err != nil {
		return fmt.Errorf("writing chain: %w", err)
	}
	var (
		line []byte
		x    []float64
	)
	for t := range c.Len() {
		step := c.Step(t)
		for k := range c.Walkers() {
			x = c.Position(t, k, x)
			line = appendRow(line[:0], step, k, c.LogDensity(t, k), x)
			if _, err := bw.Write(line); err != nil {
				return fmt.Errorf("writing chain: %w", err)
			}
		}
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("writing chain: %w", err)
	}
	return nil
}

// ReadChainFile reads a chain file: a .npy chain as Run writes it (opened with
// OpenChain, memory-mapped; Close it when done) or a CSV chain (see ReadChain,
// read into memory). The format is told by the file's first bytes. Errors name
// the file.
func ReadChainFile(path string) (*Chain, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("reading chain: %w", err)
	}
	defer f.Close()
	br := bufio.NewReaderSize(f, 1<<16)
	if magic, _ := br.Peek(len(npyMagic)); string(magic) == npyMagic {
		f.Close()
		return OpenChain(path)
	}
	c, err := ReadChain(br)
	if err != nil {
		return nil, fmt.Errorf("reading chain file %s: %w", path, err)
	}
	return c, nil
}

// ReadChain reads a chain in the CSV layout described in the package
// documentation: optional '#' comment lines, the header
// step,walker,log_density,NAME..., then one row per walker per kept step,
// walkers 0…W−1 in order within each step and steps increasing. A file whose
// last line lacks its line break, or whose last step lacks some walkers, is
// refused: it was cut short while being written.
func ReadChain(r io.Reader) (*Chain, error) {
	br := bufio.NewReaderSize(r, 1<<16)
	tail := &lastByte{r: br}
	cr := csv.NewReader(tail)
	cr.Comment = '#'
	cr.ReuseRecord = true
	header, err := cr.Read()
	if err == io.EOF {
		return nil, errors.New("no header line")
	}
	if err != nil {
		return nil, err
	}
	if len(header) < 3 || header[0] != colStep || header[1] != colWalker || header[2] != colLogDensity {
		return nil, fmt.Errorf("header %q: want %s,%s,%s followed by the parameter names", strings.Join(header, ","), colStep, colWalker, colLogDensity)
	}
	n := len(header) - 3
	c := NewChain(header[3:], 0)
	if err := checkNames(c.Names, n); err != nil {
		return nil, fmt.Errorf("header: %w", err)
	}
	cr.FieldsPerRecord = len(header)
	walkers := -1 // fixed by the first step
	var (
		rec   []byte // the records of the open step
		count int    // walkers in the open step
		step  int
		group bool // a step is open
	)
	closeStep := func() error {
		if walkers < 0 {
			walkers = count
			c.walkers = count
		}
		if count != walkers {
			return fmt.Errorf("step %d has %d walkers, earlier steps have %d", step, count, walkers)
		}
		c.mem = append(c.mem, rec...)
		c.rows++
		rec, count = rec[:0], 0
		return nil
	}
	x := make([]float64, n)
	for {
		r, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			// A malformed record that is the unfinished last line means
			// the file was cut short while being written.
			if _, next := cr.Read(); next == io.EOF && tail.last != '\n' {
				return nil, fmt.Errorf("%w: the last line is incomplete: the file was cut short", err)
			}
			return nil, err
		}
		line, _ := cr.FieldPos(0)
		s, err := strconv.Atoi(r[0])
		if err != nil {
			return nil, fmt.Errorf("line %d: step %q is not an integer", line, r[0])
		}
		k, err := strconv.Atoi(r[1])
		if err != nil {
			return nil, fmt.Errorf("line %d: walker %q is not an integer", line, r[1])
		}
		if !group || s != step {
			if group {
				if s < step {
					return nil, fmt.Errorf("line %d: step %d after step %d", line, s, step)
				}
				if err := closeStep(); err != nil {
					return nil, fmt.Errorf("line %d: %w", line, err)
				}
			}
			step, group = s, true
		}
		if k != count {
			return nil, fmt.Errorf("line %d: step %d has walker %d where walker %d is due", line, s, k, count)
		}
		lp, err := strconv.ParseFloat(r[2], 64)
		if err != nil {
			return nil, fmt.Errorf("line %d: log-density %q is not a number", line, r[2])
		}
		for j := 0; j < n; j++ {
			v, err := strconv.ParseFloat(r[3+j], 64)
			if err != nil {
				return nil, fmt.Errorf("line %d: %s = %q is not a number", line, c.Names[j], r[3+j])
			}
			x[j] = v
		}
		rec = appendRecord(rec, s, k, lp, x)
		count++
	}
	if tail.count > 0 && tail.last != '\n' {
		return nil, errors.New("the last line has no line break: the file was cut short")
	}
	if group {
		if err := closeStep(); err != nil {
			return nil, fmt.Errorf("at the end: %w: the file was cut short", err)
		}
	}
	return c, nil
}

// lastByte remembers the final byte read through it.
type lastByte struct {
	r     io.Reader
	last  byte
	count int64
}

func (l *lastByte) Read(p []byte) (int, error) {
	n, err := l.r.Read(p)
	if n > 0 {
		l.last = p[n-1]
		l.count += int64(n)
	}
	return n, err
}
