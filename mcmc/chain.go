package mcmc

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"os"
	"strconv"
	"strings"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
)

// Fixed leading columns of a chain file; the parameter columns follow.
const (
	colStep       = "step"
	colWalker     = "walker"
	colLogDensity = "log_density"
)

// Chain is a sampled chain held in memory: the positions and log-densities of
// every walker at every kept step.
type Chain struct {
	// Names are the parameter names, one per coordinate.
	Names []string
	// Step is the step number (counted from 1) of each kept row.
	Step []int
	// X holds the positions, indexed [kept row][walker][parameter].
	X [][][]float64
	// LogDensity holds the log-densities, indexed [kept row][walker].
	LogDensity [][]float64
}

// Len returns the number of kept rows.
func (c *Chain) Len() int { return len(c.Step) }

// Walkers returns the number of walkers (0 for an empty chain).
func (c *Chain) Walkers() int {
	if len(c.X) == 0 {
		return 0
	}
	return len(c.X[0])
}

// Dim returns the number of parameters.
func (c *Chain) Dim() int { return len(c.Names) }

// clampBurn limits a number of burn-in rows to 0…Len.
func (c *Chain) clampBurn(burn int) int { return min(max(burn, 0), c.Len()) }

// Series returns the trace of parameter j for every walker, indexed
// [walker][kept row], leaving out the first burn kept rows. The slices are
// new; the chain is not modified.
func (c *Chain) Series(j, burn int) [][]float64 {
	burn = c.clampBurn(burn)
	w := c.Walkers()
	out := make([][]float64, w)
	flat := make([]float64, w*(c.Len()-burn))
	for k := range out {
		out[k] = flat[k*(c.Len()-burn) : (k+1)*(c.Len()-burn)]
	}
	for t := burn; t < c.Len(); t++ {
		for k := 0; k < w; k++ {
			out[k][t-burn] = c.X[t][k][j]
		}
	}
	return out
}

// LogDensitySeries returns the log-density trace of every walker, indexed
// [walker][kept row], leaving out the first burn kept rows.
func (c *Chain) LogDensitySeries(burn int) [][]float64 {
	burn = c.clampBurn(burn)
	w := c.Walkers()
	out := make([][]float64, w)
	for k := range out {
		out[k] = make([]float64, c.Len()-burn)
		for t := burn; t < c.Len(); t++ {
			out[k][t-burn] = c.LogDensity[t][k]
		}
	}
	return out
}

// Samples returns the kept positions after the first burn kept rows as one
// flat sample, indexed [sample][parameter], walker by walker within each row.
// The rows share no memory with the chain.
func (c *Chain) Samples(burn int) [][]float64 {
	burn = c.clampBurn(burn)
	w, n := c.Walkers(), c.Dim()
	out := make([][]float64, 0, (c.Len()-burn)*w)
	flat := make([]float64, (c.Len()-burn)*w*n)
	for t := burn; t < c.Len(); t++ {
		for k := 0; k < w; k++ {
			row := flat[:n:n]
			flat = flat[n:]
			copy(row, c.X[t][k])
			out = append(out, row)
		}
	}
	return out
}

// MergeChains places the walkers of several chains side by side in one chain,
// for instance to summarise independent runs together. All chains must have
// the same parameter names and the same walker count is not required; the
// result holds the kept steps common to all, which must come in the same
// order, and is cut to the shortest chain.
func MergeChains(chains ...*Chain) (*Chain, error) {
	if len(chains) == 0 {
		return nil, errors.New("merging chains: no chains")
	}
	first := chains[0]
	rows := first.Len()
	for i, c := range chains {
		if !equalStrings(c.Names, first.Names) {
			return nil, fmt.Errorf("merging chains: chain %d has parameters %v, chain 0 has %v", i, c.Names, first.Names)
		}
		rows = min(rows, c.Len())
	}
	for i, c := range chains {
		for t := 0; t < rows; t++ {
			if c.Step[t] != first.Step[t] {
				return nil, fmt.Errorf("merging chains: row %d is step %d in chain %d but step %d in chain 0", t, c.Step[t], i, first.Step[t])
			}
		}
	}
	out := &Chain{
		Names:      append([]string(nil), first.Names...),
		Step:       append([]int(nil), first.Step[:rows]...),
		X:          make([][][]float64, rows),
		LogDensity: make([][]float64, rows),
	}
	for t := 0; t < rows; t++ {
		for _, c := range chains {
			for k := range c.X[t] {
				out.X[t] = append(out.X[t], append([]float64(nil), c.X[t][k]...))
			}
			out.LogDensity[t] = append(out.LogDensity[t], c.LogDensity[t]...)
		}
	}
	return out, nil
}

func equalStrings(a, b []string) bool {
	if len(a) != len(b) {
		return false
	}
	for i := range a {
		if a[i] != b[i] {
			return false
		}
	}
	return true
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

// chainWriter appends rows to a chain file, keeping the byte count and the
// CRC-32C of everything written so that checkpoints can vouch for the file.
type chainWriter struct {
	f    *os.File
	w    *bufio.Writer
	size int64
	crc  uint32
	line []byte
}

var castagnoli = crc32.MakeTable(crc32.Castagnoli)

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

// WriteChain writes a chain in the chain-file layout (see the package
// documentation), with the given comment lines at the top; for example to
// save chains merged with MergeChains. Run writes its chain file the same
// way, so that a chain written by WriteChain with the run's comments has the
// same bytes as the run's own file.
func WriteChain(w io.Writer, c *Chain, comments []string) error {
	if err := checkNames(c.Names, len(c.Names)); err != nil {
		return fmt.Errorf("writing chain: %w", err)
	}
	bw := bufio.NewWriterSize(w, 1<<16)
	if _, err := bw.Write(appendHeader(nil, comments, c.Names)); err != nil {
		return fmt.Errorf("writing chain: %w", err)
	}
	var line []byte
	for t := range c.X {
		for k, x := range c.X[t] {
			if len(x) != len(c.Names) {
				return fmt.Errorf("writing chain: step %d walker %d has %d values for %d parameters", c.Step[t], k, len(x), len(c.Names))
			}
			line = appendRow(line[:0], c.Step[t], k, c.LogDensity[t][k], x)
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

// createChainFile creates (or truncates) the chain file at path and writes
// the comment lines and the header.
func createChainFile(path string, comments []string, names []string) (*chainWriter, error) {
	f, err := atomicfile.Create(path)
	if err != nil {
		return nil, fmt.Errorf("creating chain file: %w", err)
	}
	cw := &chainWriter{f: f, w: bufio.NewWriterSize(f, 1<<16)}
	if err := cw.write(appendHeader(nil, comments, names)); err != nil {
		f.Close()
		return nil, fmt.Errorf("writing chain file %s: %w", path, err)
	}
	return cw, nil
}

func (cw *chainWriter) write(b []byte) error {
	n, err := cw.w.Write(b)
	cw.size += int64(n)
	cw.crc = crc32.Update(cw.crc, castagnoli, b[:n])
	return err
}

// writeStep appends the rows of one kept step.
func (cw *chainWriter) writeStep(step int, pos [][]float64, lp []float64) error {
	for k, x := range pos {
		cw.line = appendRow(cw.line[:0], step, k, lp[k], x)
		if err := cw.write(cw.line); err != nil {
			return fmt.Errorf("writing chain file %s: %w", cw.f.Name(), err)
		}
	}
	return nil
}

// sync flushes buffered rows and forces them to stable storage.
func (cw *chainWriter) sync() error {
	if err := cw.w.Flush(); err != nil {
		return fmt.Errorf("writing chain file %s: %w", cw.f.Name(), err)
	}
	if err := cw.f.Sync(); err != nil {
		return fmt.Errorf("syncing chain file %s: %w", cw.f.Name(), err)
	}
	return nil
}

func (cw *chainWriter) close() error {
	err := cw.w.Flush()
	if cerr := cw.f.Close(); err == nil {
		err = cerr
	}
	if err != nil {
		return fmt.Errorf("closing chain file %s: %w", cw.f.Name(), err)
	}
	return nil
}

// reopenChainFile checks the chain file at path against the length and
// CRC-32C a checkpoint recorded, cuts off anything beyond that length (rows
// written after the checkpoint, or a partial last row) and opens the file for
// appending. It returns the writer and the chain read back from the kept part.
func reopenChainFile(path string, size int64, crc uint32) (*chainWriter, *Chain, error) {
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		return nil, nil, fmt.Errorf("resuming: opening chain file: %w", err)
	}
	fail := func(err error) (*chainWriter, *Chain, error) {
		f.Close()
		return nil, nil, err
	}
	info, err := f.Stat()
	if err != nil {
		return fail(fmt.Errorf("resuming: %w", err))
	}
	if info.Size() < size {
		return fail(fmt.Errorf("resuming: chain file %s has %d bytes but the checkpoint vouches for %d: the file was truncated", path, info.Size(), size))
	}
	h := crc32.New(castagnoli)
	if _, err := io.Copy(h, io.NewSectionReader(f, 0, size)); err != nil {
		return fail(fmt.Errorf("resuming: reading chain file %s: %w", path, err))
	}
	if h.Sum32() != crc {
		return fail(fmt.Errorf("resuming: chain file %s does not match its checkpoint (CRC-32C of the first %d bytes differs): the file was changed or corrupted", path, size))
	}
	if info.Size() > size {
		if err := f.Truncate(size); err != nil {
			return fail(fmt.Errorf("resuming: cutting chain file %s back to %d bytes: %w", path, size, err))
		}
		if err := f.Sync(); err != nil {
			return fail(fmt.Errorf("resuming: syncing chain file %s: %w", path, err))
		}
	}
	chain, err := ReadChain(io.NewSectionReader(f, 0, size))
	if err != nil {
		return fail(fmt.Errorf("resuming: chain file %s: %w", path, err))
	}
	if _, err := f.Seek(size, io.SeekStart); err != nil {
		return fail(fmt.Errorf("resuming: %w", err))
	}
	return &chainWriter{f: f, w: bufio.NewWriterSize(f, 1<<16), size: size, crc: crc}, chain, nil
}

// ReadChainFile reads a chain file written by Run; see ReadChain. Errors name
// the file.
func ReadChainFile(path string) (*Chain, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("reading chain: %w", err)
	}
	defer f.Close()
	c, err := ReadChain(bufio.NewReaderSize(f, 1<<16))
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
	c := &Chain{Names: append([]string(nil), header[3:]...)}
	if err := checkNames(c.Names, n); err != nil {
		return nil, fmt.Errorf("header: %w", err)
	}
	cr.FieldsPerRecord = len(header)
	walkers := -1 // fixed by the first step
	var (
		flat  []float64
		row   [][]float64
		lps   []float64
		step  int
		group bool // a step is open
	)
	closeStep := func() error {
		if walkers < 0 {
			walkers = len(row)
		}
		if len(row) != walkers {
			return fmt.Errorf("step %d has %d walkers, earlier steps have %d", step, len(row), walkers)
		}
		c.X = append(c.X, row)
		c.LogDensity = append(c.LogDensity, lps)
		c.Step = append(c.Step, step)
		return nil
	}
	for {
		rec, err := cr.Read()
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
		s, err := strconv.Atoi(rec[0])
		if err != nil {
			return nil, fmt.Errorf("line %d: step %q is not an integer", line, rec[0])
		}
		k, err := strconv.Atoi(rec[1])
		if err != nil {
			return nil, fmt.Errorf("line %d: walker %q is not an integer", line, rec[1])
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
			size := max(walkers, 16)
			row = make([][]float64, 0, size)
			lps = make([]float64, 0, size)
		}
		if k != len(row) {
			return nil, fmt.Errorf("line %d: step %d has walker %d where walker %d is due", line, s, k, len(row))
		}
		lp, err := strconv.ParseFloat(rec[2], 64)
		if err != nil {
			return nil, fmt.Errorf("line %d: log-density %q is not a number", line, rec[2])
		}
		if len(flat) < n {
			flat = make([]float64, n*1024)
		}
		x := flat[:n:n]
		flat = flat[n:]
		for j := 0; j < n; j++ {
			v, err := strconv.ParseFloat(rec[3+j], 64)
			if err != nil {
				return nil, fmt.Errorf("line %d: %s = %q is not a number", line, c.Names[j], rec[3+j])
			}
			x[j] = v
		}
		row = append(row, x)
		lps = append(lps, lp)
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
