package catalog

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
	"unicode/utf8"
)

// Write writes sources to w as a catalog in canonical form: a header row,
// then one row per source, with decimal degrees and the shortest decimal
// numbers that read back to the same float64 values. Only the columns the
// sources need are written, in the order name, ra, dec, l, b, parallax,
// pmra, pmdec, pml, pmb, vlsr, vhelio (each value followed by its _err),
// arm. Source.Line and the fields of absent measurements are ignored.
//
// Write refuses (before writing anything) sources that [Read] would not give
// back unchanged: an empty list, a duplicate or empty name, a name or arm
// label with surrounding spaces or control characters, the arm label "?"
// (use "" for a free source), a position out of range (longitudes in
// [0, 360), latitudes in [−90, 90]), an absent parallax, a value that is not
// finite, or an uncertainty that is not positive and finite.
func Write(w io.Writer, sources []Source) error {
	if len(sources) == 0 {
		return errors.New("writing catalog: no sources")
	}
	var use [numColumns]bool
	use[colName], use[colPlx], use[colPlxErr] = true, true, true
	seen := make(map[string]int, len(sources))
	for i, s := range sources {
		if err := checkSource(s); err != nil {
			return fmt.Errorf("writing catalog: source %d (%q): %w", i+1, s.Name, err)
		}
		if j, dup := seen[s.Name]; dup {
			return fmt.Errorf("writing catalog: source %d (%q): duplicate name (also source %d)", i+1, s.Name, j+1)
		}
		seen[s.Name] = i
		for _, c := range s.columns() {
			use[c] = true
		}
	}

	bw := bufio.NewWriter(w)
	var row []string
	for c := range numColumns {
		if use[c] {
			row = append(row, columnNames[c])
		}
	}
	writeRow(bw, row)
	for _, s := range sources {
		var cells [numColumns]string
		s.cells(&cells)
		row = row[:0]
		for c := range numColumns {
			if use[c] {
				row = append(row, cells[c])
			}
		}
		writeRow(bw, row)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("writing catalog: %w", err)
	}
	return nil
}

// writeRow writes one CSV row, quoting fields that hold a comma or a quote
// or that start with '#' (which would make the line a comment).
func writeRow(w *bufio.Writer, fields []string) {
	for i, f := range fields {
		if i > 0 {
			w.WriteByte(',')
		}
		if strings.ContainsAny(f, `,"`) || strings.HasPrefix(f, "#") {
			f = `"` + strings.ReplaceAll(f, `"`, `""`) + `"`
		}
		w.WriteString(f)
	}
	w.WriteByte('\n')
}

// columns returns the columns the source fills.
func (s *Source) columns() []column {
	var cells [numColumns]string
	s.cells(&cells)
	var cols []column
	for c, v := range cells {
		if v != "" {
			cols = append(cols, column(c))
		}
	}
	return cols
}

// cells formats the source's fields, leaving absent ones blank.
func (s *Source) cells(cells *[numColumns]string) {
	cells[colName] = s.Name
	lon, lat := colRA, colDec
	if s.Frame == Galactic {
		lon, lat = colL, colB
	}
	cells[lon], cells[lat] = formatFloat(s.Lon), formatFloat(s.Lat)
	put := func(m Measurement, v, e column) {
		if m.OK {
			cells[v], cells[e] = formatFloat(m.Value), formatFloat(m.Err)
		}
	}
	put(s.Parallax, colPlx, colPlxErr)
	if s.PMFrame == Galactic {
		put(s.PM1, colPML, colPMLErr)
		put(s.PM2, colPMB, colPMBErr)
	} else {
		put(s.PM1, colPMRA, colPMRAErr)
		put(s.PM2, colPMDec, colPMDecErr)
	}
	if s.VelLSR {
		put(s.Vel, colVLSR, colVLSRErr)
	} else {
		put(s.Vel, colVHelio, colVHelioErr)
	}
	cells[colArm] = s.Arm
}

// formatFloat returns the shortest decimal text that parses back to v.
func formatFloat(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// checkSource reports why Read would not give the source back unchanged.
func checkSource(s Source) error {
	if err := checkText("name", s.Name); err != nil {
		return err
	}
	if s.Name == "" {
		return errors.New("empty name")
	}
	switch s.Frame {
	case Equatorial, Galactic:
	default:
		return fmt.Errorf("unknown position frame %v", s.Frame)
	}
	if !(s.Lon >= 0 && s.Lon < 360) {
		return fmt.Errorf("longitude %v deg outside [0, 360)", s.Lon)
	}
	if !(s.Lat >= -90 && s.Lat <= 90) {
		return fmt.Errorf("latitude %v deg outside [-90, 90]", s.Lat)
	}
	if !s.Parallax.OK {
		return errors.New("no parallax")
	}
	if err := checkMeasurement("parallax", s.Parallax); err != nil {
		return err
	}
	if s.PM1.OK || s.PM2.OK {
		switch s.PMFrame {
		case Equatorial, Galactic:
		default:
			return fmt.Errorf("unknown proper-motion frame %v", s.PMFrame)
		}
	}
	if err := checkMeasurement("first proper-motion component", s.PM1); err != nil {
		return err
	}
	if err := checkMeasurement("second proper-motion component", s.PM2); err != nil {
		return err
	}
	if err := checkMeasurement("line-of-sight velocity", s.Vel); err != nil {
		return err
	}
	if s.Arm == "?" {
		return errors.New(`arm label "?" (a free source has the label "")`)
	}
	return checkText("arm label", s.Arm)
}

// checkText reports why a name or label would not read back unchanged.
func checkText(what, s string) error {
	switch {
	case !utf8.ValidString(s):
		return fmt.Errorf("%s is not valid UTF-8", what)
	case strings.TrimSpace(s) != s:
		return fmt.Errorf("%s %q has surrounding spaces", what, s)
	case !printable(s):
		return fmt.Errorf("%s %q holds control characters", what, s)
	}
	return nil
}

// checkMeasurement reports why a present measurement is invalid.
func checkMeasurement(what string, m Measurement) error {
	if !m.OK {
		return nil
	}
	if math.IsNaN(m.Value) || math.IsInf(m.Value, 0) {
		return fmt.Errorf("%s value %v is not finite", what, m.Value)
	}
	if !(m.Err > 0) || math.IsInf(m.Err, 0) {
		return fmt.Errorf("%s uncertainty %v is not positive and finite", what, m.Err)
	}
	return nil
}
