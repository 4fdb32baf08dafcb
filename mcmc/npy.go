package mcmc

import (
	"bufio"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"math"
	"os"
	"slices"
	"strconv"
	"strings"
	"unicode/utf8"

	"golang.org/x/exp/mmap"

	"github.com/mirabilis-astro/mirabilis/internal/atomicfile"
)

// The chain file is a NumPy .npy file (format versions 1.0, 2.0 and 3.0 as described in
// NumPy's numpy.lib.format documentation and NEP 1): the magic string, the version, the
// header length, a header that is a Python dict literal padded with spaces to a multiple
// of 64 bytes and ended by '\n', then the array's bytes in C order. The array has shape
// (kept steps, walkers) and a structured dtype of little-endian 8-byte fields:
// step and walker (int64), log_density and one field per parameter (float64).
const npyMagic = "\x93NUMPY"

// npyAlign is the alignment of the data that NumPy's own writer uses.
const npyAlign = 64

// npyMaxRows fixes the width of the row count in the header, so that the header keeps its
// length when the count grows and can be rewritten in place.
const npyMaxRows = math.MaxInt64

// pyString writes s as a Python string literal.
func pyString(b *strings.Builder, s string) {
	b.WriteByte('\'')
	for _, r := range s {
		switch {
		case r == '\\' || r == '\'':
			b.WriteByte('\\')
			b.WriteRune(r)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(b, "\\x%02x", r)
		default:
			b.WriteRune(r)
		}
	}
	b.WriteByte('\'')
}

// npyDict returns the header dict of a chain of the given names, rows and walkers.
func npyDict(names []string, rows, walkers int) string {
	var b strings.Builder
	b.WriteString("{'descr': [('step', '<i8'), ('walker', '<i8'), ('log_density', '<f8')")
	for _, s := range names {
		b.WriteString(", (")
		pyString(&b, s)
		b.WriteString(", '<f8')")
	}
	fmt.Fprintf(&b, "], 'fortran_order': False, 'shape': (%d, %d), }", rows, walkers)
	return b.String()
}

// npyHeader returns the complete header of a chain file: its length depends on the names
// and the walkers only, never on rows.
func npyHeader(names []string, rows, walkers int) []byte {
	longest := len(npyDict(names, npyMaxRows, walkers))
	dict := npyDict(names, rows, walkers)
	major, lenBytes := byte(1), 2
	ascii := true
	for _, s := range names {
		for i := 0; i < len(s); i++ {
			ascii = ascii && s[i] < utf8.RuneSelf
		}
	}
	total := roundUp(len(npyMagic)+2+lenBytes+longest+1, npyAlign)
	switch {
	case !ascii:
		major, lenBytes = 3, 4 // UTF-8 header
	case total-len(npyMagic)-2-lenBytes > math.MaxUint16:
		major, lenBytes = 2, 4
	}
	total = roundUp(len(npyMagic)+2+lenBytes+longest+1, npyAlign)
	hlen := total - len(npyMagic) - 2 - lenBytes
	out := make([]byte, 0, total)
	out = append(out, npyMagic...)
	out = append(out, major, 0)
	if lenBytes == 2 {
		out = append(out, byte(hlen), byte(hlen>>8))
	} else {
		out = append(out, byte(hlen), byte(hlen>>8), byte(hlen>>16), byte(hlen>>24))
	}
	out = append(out, dict...)
	for len(out) < total-1 {
		out = append(out, ' ')
	}
	return append(out, '\n')
}

func roundUp(n, m int) int { return (n + m - 1) / m * m }

// chainWriter appends the rows of a run to its .npy chain file, keeping the number of
// rows, the file's length and the CRC-32C of the data (everything after the header, which
// is rewritten at every sync) so that a checkpoint can vouch for the file.
type chainWriter struct {
	f       *os.File
	w       *bufio.Writer
	names   []string
	walkers int
	hdr     int64 // header length
	rows    int
	size    int64 // file length, header included
	crc     uint32
	rec     []byte
}

var castagnoli = crc32.MakeTable(crc32.Castagnoli)

// createChainFile creates (or truncates) the chain file at path and writes the header of
// an empty chain.
func createChainFile(path string, names []string, walkers int) (*chainWriter, error) {
	f, err := atomicfile.Create(path)
	if err != nil {
		return nil, fmt.Errorf("creating chain file: %w", err)
	}
	h := npyHeader(names, 0, walkers)
	if _, err := f.Write(h); err != nil {
		f.Close()
		return nil, fmt.Errorf("writing chain file %s: %w", path, err)
	}
	return &chainWriter{f: f, w: bufio.NewWriterSize(f, 1<<16), names: names, walkers: walkers,
		hdr: int64(len(h)), size: int64(len(h))}, nil
}

// writeStep appends the records of one kept step.
func (cw *chainWriter) writeStep(step int, pos [][]float64, lp []float64) error {
	cw.rec = cw.rec[:0]
	for k, x := range pos {
		cw.rec = appendRecord(cw.rec, step, k, lp[k], x)
	}
	n, err := cw.w.Write(cw.rec)
	cw.size += int64(n)
	cw.crc = crc32.Update(cw.crc, castagnoli, cw.rec[:n])
	if err != nil {
		return fmt.Errorf("writing chain file %s: %w", cw.f.Name(), err)
	}
	cw.rows++
	return nil
}

// ReadAt reads the file's bytes, buffered rows included.
func (cw *chainWriter) ReadAt(p []byte, off int64) (int, error) {
	if cw.w.Buffered() > 0 {
		if err := cw.w.Flush(); err != nil {
			return 0, err
		}
	}
	return cw.f.ReadAt(p, off)
}

// view returns the chain written so far, read through the writer.
func (cw *chainWriter) view() *Chain {
	return &Chain{Names: cw.names, walkers: cw.walkers, rows: cw.rows, rec: recordSize(len(cw.names)), src: cw, base: cw.hdr}
}

// sync flushes buffered rows, states their number in the header and forces the file to
// stable storage. A crash between the two writes leaves a header that counts fewer rows
// than the file holds, which NumPy reads without complaint.
func (cw *chainWriter) sync() error {
	if err := cw.w.Flush(); err != nil {
		return fmt.Errorf("writing chain file %s: %w", cw.f.Name(), err)
	}
	if err := cw.f.Sync(); err != nil {
		return fmt.Errorf("syncing chain file %s: %w", cw.f.Name(), err)
	}
	if _, err := cw.f.WriteAt(npyHeader(cw.names, cw.rows, cw.walkers), 0); err != nil {
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

// reopenChainFile checks the chain file at path against the length and CRC-32C a
// checkpoint recorded, cuts off anything beyond that length (rows written after the
// checkpoint, or a partial last row), states the kept rows in the header and opens the
// file for appending.
func reopenChainFile(path string, names []string, walkers int, size int64, crc uint32) (*chainWriter, error) {
	f, err := os.OpenFile(path, os.O_RDWR, 0)
	if err != nil {
		return nil, fmt.Errorf("resuming: opening chain file: %w", err)
	}
	fail := func(err error) (*chainWriter, error) {
		f.Close()
		return nil, fmt.Errorf("resuming: chain file %s: %w", path, err)
	}
	h, err := readNpyHeader(f)
	if err != nil {
		return fail(err)
	}
	if !slices.Equal(h.names, names) || h.walkers != walkers {
		return fail(fmt.Errorf("holds %d walkers of %v, the run has %d of %v", h.walkers, h.names, walkers, names))
	}
	want := npyHeader(names, 0, walkers)
	if h.size != int64(len(want)) {
		return fail(fmt.Errorf("header of %d bytes, this sampler writes %d", h.size, len(want)))
	}
	info, err := f.Stat()
	if err != nil {
		return fail(err)
	}
	rowBytes := int64(walkers * recordSize(len(names)))
	if size < h.size || (size-h.size)%rowBytes != 0 {
		return fail(fmt.Errorf("the checkpoint vouches for %d bytes, which is not a whole number of rows", size))
	}
	if info.Size() < size {
		return fail(fmt.Errorf("%d bytes but the checkpoint vouches for %d: the file was truncated", info.Size(), size))
	}
	sum := crc32.New(castagnoli)
	if _, err := io.Copy(sum, io.NewSectionReader(f, h.size, size-h.size)); err != nil {
		return fail(err)
	}
	if sum.Sum32() != crc {
		return fail(fmt.Errorf("does not match its checkpoint (CRC-32C of the %d bytes of rows differs): the file was changed or corrupted", size-h.size))
	}
	if info.Size() > size {
		// The kept rows go to a new file that replaces the old one, rather than cutting the
		// old one back in place: a reader that has the old file memory-mapped (report or
		// plot run while the fit resumes) keeps a whole file instead of faulting on pages
		// that vanished.
		err := atomicfile.WriteWith(path, func(w io.Writer) error {
			_, err := io.Copy(w, io.NewSectionReader(f, 0, size))
			return err
		})
		if err != nil {
			return fail(fmt.Errorf("cutting back to %d bytes: %w", size, err))
		}
		f.Close()
		if f, err = os.OpenFile(path, os.O_RDWR, 0); err != nil {
			return nil, fmt.Errorf("resuming: opening chain file: %w", err)
		}
	}
	if _, err := f.Seek(size, io.SeekStart); err != nil {
		return fail(err)
	}
	cw := &chainWriter{f: f, w: bufio.NewWriterSize(f, 1<<16), names: names, walkers: walkers,
		hdr: h.size, rows: int((size - h.size) / rowBytes), size: size, crc: crc}
	if err := cw.sync(); err != nil {
		f.Close()
		return nil, fmt.Errorf("resuming: %w", err)
	}
	return cw, nil
}

// OpenChain opens a .npy chain file (as Run writes it, or as NumPy writes an array of
// that layout) memory-mapped: rows are read from the file when asked for and the chain
// holds no copy of them. Close the chain when done. The header must describe a C-ordered
// array of shape (kept steps, walkers) with the fields step and walker ('<i8'),
// log_density and the parameters ('<f8'), and the file must hold that many rows.
func OpenChain(path string) (*Chain, error) {
	r, err := mmap.Open(path)
	if err != nil {
		return nil, fmt.Errorf("reading chain: %w", err)
	}
	h, err := readNpyHeader(io.NewSectionReader(r, 0, int64(r.Len())))
	if err != nil {
		r.Close()
		return nil, fmt.Errorf("reading chain file %s: %w", path, err)
	}
	rec := recordSize(len(h.names))
	if need := h.size + int64(h.rows)*int64(h.walkers)*int64(rec); int64(r.Len()) < need {
		r.Close()
		return nil, fmt.Errorf("reading chain file %s: %d bytes where the header announces %d rows of %d walkers (%d bytes): the file was cut short", path, r.Len(), h.rows, h.walkers, need)
	}
	return &Chain{Names: h.names, walkers: h.walkers, rows: h.rows, rec: rec, src: r, base: h.size, closer: r}, nil
}

// npyChainHeader is what a chain file's header says.
type npyChainHeader struct {
	names         []string
	rows, walkers int
	size          int64 // header length: the data start here
}

// readNpyHeader reads and checks the header of a chain file.
func readNpyHeader(r io.Reader) (*npyChainHeader, error) {
	pre := make([]byte, len(npyMagic)+2)
	if _, err := io.ReadFull(r, pre); err != nil {
		return nil, errors.New("too short for a .npy header")
	}
	if string(pre[:len(npyMagic)]) != npyMagic {
		return nil, errors.New("not a .npy file (no \\x93NUMPY magic string)")
	}
	major := pre[len(npyMagic)]
	var hlen int
	switch major {
	case 1:
		var b [2]byte
		if _, err := io.ReadFull(r, b[:]); err != nil {
			return nil, errors.New("header cut short")
		}
		hlen = int(b[0]) | int(b[1])<<8
	case 2, 3:
		var b [4]byte
		if _, err := io.ReadFull(r, b[:]); err != nil {
			return nil, errors.New("header cut short")
		}
		hlen = int(b[0]) | int(b[1])<<8 | int(b[2])<<16 | int(b[3])<<24
	default:
		return nil, fmt.Errorf(".npy format version %d.%d, want 1.0, 2.0 or 3.0", major, pre[len(npyMagic)+1])
	}
	if hlen > 1<<24 {
		return nil, fmt.Errorf("implausible header length %d", hlen)
	}
	text := make([]byte, hlen)
	if _, err := io.ReadFull(r, text); err != nil {
		return nil, errors.New("header cut short")
	}
	h := &npyChainHeader{size: int64(len(pre) + 2 + hlen)}
	if major > 1 {
		h.size += 2
	}
	p := pyParser{s: string(text)}
	v, err := p.value()
	if err != nil {
		return nil, fmt.Errorf("header: %w", err)
	}
	d, ok := v.(map[string]any)
	if !ok {
		return nil, errors.New("header is not a dict")
	}
	if fo, ok := d["fortran_order"].(bool); !ok || fo {
		return nil, errors.New("header: want 'fortran_order': False")
	}
	shape, ok := d["shape"].([]any)
	if !ok || len(shape) != 2 {
		return nil, fmt.Errorf("header: shape %v, want (kept steps, walkers)", d["shape"])
	}
	rows, ok1 := shape[0].(int)
	walkers, ok2 := shape[1].(int)
	if !ok1 || !ok2 || rows < 0 || walkers < 1 {
		return nil, fmt.Errorf("header: shape %v, want two non-negative integers", d["shape"])
	}
	h.rows, h.walkers = rows, walkers
	descr, ok := d["descr"].([]any)
	if !ok || len(descr) < 4 {
		return nil, fmt.Errorf("header: descr %v, want the fields step, walker, log_density and the parameters", d["descr"])
	}
	for i, f := range descr {
		pair, ok := f.([]any)
		if !ok || len(pair) != 2 {
			return nil, fmt.Errorf("header: field %d is %v, want (name, type)", i, f)
		}
		name, ok1 := pair[0].(string)
		typ, ok2 := pair[1].(string)
		want := "<f8"
		if i < 2 {
			want = "<i8"
		}
		fixed := []string{colStep, colWalker, colLogDensity}
		switch {
		case !ok1 || !ok2:
			return nil, fmt.Errorf("header: field %d is %v, want (name, type)", i, f)
		case i < 3 && name != fixed[i]:
			return nil, fmt.Errorf("header: field %d is %q, want %q", i, name, fixed[i])
		case typ != want:
			return nil, fmt.Errorf("header: field %q has type %q, want %q", name, typ, want)
		}
		if i >= 3 {
			h.names = append(h.names, name)
		}
	}
	if err := checkNames(h.names, len(h.names)); err != nil {
		return nil, fmt.Errorf("header: %w", err)
	}
	return h, nil
}

// pyParser reads the Python literals of a .npy header: dicts, lists, tuples (both
// returned as []any), strings, integers and booleans.
type pyParser struct {
	s string
	i int
}

func (p *pyParser) skip() {
	for p.i < len(p.s) && strings.IndexByte(" \t\n\r", p.s[p.i]) >= 0 {
		p.i++
	}
}

func (p *pyParser) value() (any, error) {
	p.skip()
	if p.i >= len(p.s) {
		return nil, errors.New("unexpected end")
	}
	switch c := p.s[p.i]; {
	case c == '{':
		p.i++
		d := map[string]any{}
		for {
			p.skip()
			if p.i < len(p.s) && p.s[p.i] == '}' {
				p.i++
				return d, nil
			}
			k, err := p.value()
			if err != nil {
				return nil, err
			}
			key, ok := k.(string)
			if !ok {
				return nil, fmt.Errorf("dict key %v is not a string", k)
			}
			p.skip()
			if p.i >= len(p.s) || p.s[p.i] != ':' {
				return nil, fmt.Errorf("missing ':' after %q", key)
			}
			p.i++
			v, err := p.value()
			if err != nil {
				return nil, err
			}
			d[key] = v
			if err := p.sep('}'); err != nil {
				return nil, err
			}
		}
	case c == '[' || c == '(':
		end := byte(']')
		if c == '(' {
			end = ')'
		}
		p.i++
		var l []any
		for {
			p.skip()
			if p.i < len(p.s) && p.s[p.i] == end {
				p.i++
				return l, nil
			}
			v, err := p.value()
			if err != nil {
				return nil, err
			}
			l = append(l, v)
			if err := p.sep(end); err != nil {
				return nil, err
			}
		}
	case c == '\'' || c == '"':
		return p.str(c)
	case c >= '0' && c <= '9':
		j := p.i
		for p.i < len(p.s) && p.s[p.i] >= '0' && p.s[p.i] <= '9' {
			p.i++
		}
		if p.i < len(p.s) && p.s[p.i] == 'L' { // written by Python 2
			p.i++
			return strconv.Atoi(p.s[j : p.i-1])
		}
		return strconv.Atoi(p.s[j:p.i])
	case strings.HasPrefix(p.s[p.i:], "True"):
		p.i += 4
		return true, nil
	case strings.HasPrefix(p.s[p.i:], "False"):
		p.i += 5
		return false, nil
	}
	return nil, fmt.Errorf("unexpected %q at byte %d", p.s[p.i], p.i)
}

// sep consumes a ',' or sees the closing bracket.
func (p *pyParser) sep(end byte) error {
	p.skip()
	if p.i < len(p.s) && p.s[p.i] == ',' {
		p.i++
		return nil
	}
	if p.i < len(p.s) && p.s[p.i] == end {
		return nil
	}
	return fmt.Errorf("want ',' or %q at byte %d", end, p.i)
}

func (p *pyParser) str(q byte) (string, error) {
	p.i++
	var b strings.Builder
	for p.i < len(p.s) {
		c := p.s[p.i]
		switch {
		case c == q:
			p.i++
			return b.String(), nil
		case c == '\\' && p.i+1 < len(p.s):
			e := p.s[p.i+1]
			p.i += 2
			switch e {
			case 'x':
				if p.i+2 > len(p.s) {
					return "", errors.New("bad \\x escape")
				}
				v, err := strconv.ParseUint(p.s[p.i:p.i+2], 16, 8)
				if err != nil {
					return "", errors.New("bad \\x escape")
				}
				b.WriteRune(rune(v))
				p.i += 2
			case 'n':
				b.WriteByte('\n')
			case 't':
				b.WriteByte('\t')
			case 'r':
				b.WriteByte('\r')
			default:
				b.WriteByte(e)
			}
		default:
			b.WriteByte(c)
			p.i++
		}
	}
	return "", errors.New("string not closed")
}
