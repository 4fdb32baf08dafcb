package quad

import (
	"encoding/binary"
	"fmt"
	"math"
)

const (
	binaryMagic   = "QLAY"
	binaryVersion = 1
	binaryHeader  = 4 + 1 + 8 + 8 + 4
)

// MarshalBinary returns the layout in binary form, for checkpoints. The form
// holds the range and the panels, all numbers little-endian:
//
//	bytes 0–3   "QLAY"
//	byte  4     format version, 1
//	bytes 5–12  lo, IEEE 754 float64 bits
//	bytes 13–20 hi
//	bytes 21–24 n, the number of panels, uint32
//	then n pairs (Lo, Hi) of float64 bits, 16 bytes a panel.
//
// Nodes and weights are not stored: UnmarshalBinary recomputes them from the
// panels by the same arithmetic, which gives them back bit for bit. It
// implements encoding.BinaryMarshaler and never fails.
func (l *Layout) MarshalBinary() ([]byte, error) {
	buf := make([]byte, binaryHeader+16*len(l.panels))
	copy(buf, binaryMagic)
	buf[4] = binaryVersion
	binary.LittleEndian.PutUint64(buf[5:], math.Float64bits(l.lo))
	binary.LittleEndian.PutUint64(buf[13:], math.Float64bits(l.hi))
	binary.LittleEndian.PutUint32(buf[21:], uint32(len(l.panels)))
	for i, p := range l.panels {
		k := binaryHeader + 16*i
		binary.LittleEndian.PutUint64(buf[k:], math.Float64bits(p.Lo))
		binary.LittleEndian.PutUint64(buf[k+8:], math.Float64bits(p.Hi))
	}
	return buf, nil
}

// UnmarshalBinary sets l to the layout in data, as written by MarshalBinary.
// It checks the form and the panels as NewLayout does and leaves l unchanged
// on error. It implements encoding.BinaryUnmarshaler.
func (l *Layout) UnmarshalBinary(data []byte) error {
	if len(data) < binaryHeader || string(data[:4]) != binaryMagic {
		return errFormat
	}
	if data[4] != binaryVersion {
		return fmt.Errorf("quad: layout in binary form version %d, want %d", data[4], binaryVersion)
	}
	n := binary.LittleEndian.Uint32(data[21:])
	if uint64(len(data)) != binaryHeader+16*uint64(n) {
		return fmt.Errorf("quad: layout in binary form of %d bytes, want %d for %d panels",
			len(data), binaryHeader+16*uint64(n), n)
	}
	lo := math.Float64frombits(binary.LittleEndian.Uint64(data[5:]))
	hi := math.Float64frombits(binary.LittleEndian.Uint64(data[13:]))
	panels := make([]Panel, n)
	for i := range panels {
		k := binaryHeader + 16*i
		panels[i].Lo = math.Float64frombits(binary.LittleEndian.Uint64(data[k:]))
		panels[i].Hi = math.Float64frombits(binary.LittleEndian.Uint64(data[k+8:]))
	}
	if n == 0 && lo == 0 && hi == 0 {
		*l = Layout{} // the zero Layout
		return nil
	}
	nl, err := NewLayout(lo, hi, panels)
	if err != nil {
		return fmt.Errorf("reading layout: %w", err)
	}
	*l = *nl
	return nil
}
