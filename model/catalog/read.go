package catalog

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"slices"
	"strings"
	"unicode/utf8"

	"github.com/mirabilis-astro/mirabilis/internal/spelling"
)

// column is a canonical catalog column.
type column int

const (
	colName column = iota
	colRA
	colDec
	colL
	colB
	colPlx
	colPlxErr
	colPMRA
	colPMRAErr
	colPMDec
	colPMDecErr
	colPML
	colPMLErr
	colPMB
	colPMBErr
	colVLSR
	colVLSRErr
	colVHelio
	colVHelioErr
	colArm
	colDistance // places files only (see ReadPlaces)
	numColumns
)

// columnNames holds the canonical (lower-case) column names.
var columnNames = [numColumns]string{
	"name", "ra", "dec", "l", "b", "parallax", "parallax_err",
	"pmra", "pmra_err", "pmdec", "pmdec_err", "pml", "pml_err", "pmb", "pmb_err",
	"vlsr", "vlsr_err", "vhelio", "vhelio_err", "arm", "distance",
}

// columnUnits holds the unit of each numeric column, for messages.
var columnUnits = [numColumns]string{
	colRA: "deg", colDec: "deg", colL: "deg", colB: "deg",
	colPlx: "mas", colPlxErr: "mas",
	colPMRA: "mas/yr", colPMRAErr: "mas/yr", colPMDec: "mas/yr", colPMDecErr: "mas/yr",
	colPML: "mas/yr", colPMLErr: "mas/yr", colPMB: "mas/yr", colPMBErr: "mas/yr",
	colVLSR: "km/s", colVLSRErr: "km/s", colVHelio: "km/s", colVHelioErr: "km/s",
	colDistance: "kpc",
}

// valueErrorPairs lists each measured column with its uncertainty column.
var valueErrorPairs = [][2]column{
	{colPlx, colPlxErr},
	{colPMRA, colPMRAErr}, {colPMDec, colPMDecErr},
	{colPML, colPMLErr}, {colPMB, colPMBErr},
	{colVLSR, colVLSRErr}, {colVHelio, colVHelioErr},
}

const knownColumns = "known columns: name, ra, dec, l, b, parallax, pmra, pmdec, pml, pmb, vlsr, vhelio (each with its _err), arm"

// lookupColumn returns the canonical column for a header name, matched
// without regard to case and with "_error" read as "_err".
func lookupColumn(name string) (column, bool) {
	n := strings.ToLower(name)
	if strings.HasSuffix(n, "_error") {
		n = strings.TrimSuffix(n, "_error") + "_err"
	}
	for c, cn := range columnNames {
		if n == cn {
			return column(c), true
		}
	}
	return 0, false
}

// placeColumns are the columns of a places file.
var placeColumns = []column{colName, colRA, colDec, colL, colB, colDistance}

const knownPlaceColumns = "known columns: name, ra, dec, l, b, distance"

// column returns the column a header name stands for in the kind of file being read: a
// catalog's columns, or those of a places file.
func (rd *reader) column(name string) (column, bool) {
	c, ok := lookupColumn(name)
	if !ok {
		return 0, false
	}
	if rd.places {
		return c, slices.Contains(placeColumns, c)
	}
	return c, c != colDistance
}

// known lists the columns of the kind of file being read, for messages.
func (rd *reader) known() string {
	if rd.places {
		return knownPlaceColumns
	}
	return knownColumns
}

// suggest returns the column of the kind of file being read nearest to an unknown name,
// or "" if none is close (see spelling.Nearest).
func (rd *reader) suggest(name string) string {
	if rd.places {
		names := make([]string, len(placeColumns))
		for i, c := range placeColumns {
			names[i] = columnNames[c]
		}
		return spelling.Nearest(name, names)
	}
	return suggestColumn(name)
}

// header is a parsed header row.
type header struct {
	line  int
	names []string
	index [numColumns]int // 0-based field index, or -1 if absent
}

func (h *header) has(c column) bool { return h.index[c] >= 0 }

// label returns the name of column c as the header writes it, or its
// canonical name if the header lacks it.
func (h *header) label(c column) string {
	if h.has(c) {
		return h.names[h.index[c]]
	}
	return columnNames[c]
}

// Read reads a catalog in the format described in the package documentation
// from r; name (usually the file's path) is used in messages and as the
// catalog's Path. If anything in the catalog is wrong, Read returns no
// catalog and an [*Error] listing the problems; an error from r is returned
// wrapped.
func Read(r io.Reader, name string) (*Catalog, error) {
	rd := reader{ps: problems{err: Error{File: name}}, seen: map[string]int{}}
	if err := rd.read(r, name); err != nil {
		return nil, err
	}
	return &Catalog{Path: name, Header: rd.h.names, Sources: rd.sources, Warnings: rd.warnings}, nil
}

// read reads the lines of r into rd; name is used in messages.
func (rd *reader) read(r io.Reader, name string) error {
	br := bufio.NewReader(r)
	for lineNo := 1; ; lineNo++ {
		line, err := br.ReadString('\n')
		if err != nil && !errors.Is(err, io.EOF) {
			return fmt.Errorf("reading %s %s: %w", rd.what(), name, err)
		}
		if line == "" && err != nil {
			break
		}
		line = strings.TrimSuffix(line, "\n")
		line = strings.TrimSuffix(line, "\r")
		if lineNo == 1 {
			line = strings.TrimPrefix(line, "\uFEFF")
		}
		if !rd.line(line, lineNo) {
			return &rd.ps.err
		}
		if err != nil {
			break
		}
	}
	switch {
	case rd.h == nil && rd.ps.count() == 0 && rd.places:
		rd.ps.add(Problem{Reason: "no header row: expected a line naming the columns, such as name,l,b,distance"})
	case rd.h == nil && rd.ps.count() == 0:
		rd.ps.add(Problem{Reason: "no header row: expected a line naming the columns, such as name,ra,dec,parallax,parallax_err"})
	case rd.h != nil && len(rd.sources)+len(rd.placeList) == 0 && rd.ps.count() == 0:
		rd.ps.add(Problem{Reason: fmt.Sprintf("no %s: the header on line %d is followed by no rows", rd.rowsName(), rd.h.line)})
	}
	if rd.ps.count() > 0 {
		return &rd.ps.err
	}
	for i := range rd.warnings {
		rd.warnings[i].File = name
	}
	return nil
}

// reader holds the state of one Read or ReadPlaces.
type reader struct {
	ps      problems
	h       *header
	sources []Source
	seen    map[string]int // name → line

	places    bool // reading a places file (ReadPlaces), not a catalog
	placeList []Place

	lastComment     string // text of the last comment before the header
	lastCommentLine int
	rows            int // data rows seen
	warnings        []Problem

	// The row being read.
	fields  []string
	lineNo  int
	rowGood bool
}

// line handles one line of the file. It returns false when reading must
// stop (a bad header).
func (rd *reader) line(line string, lineNo int) bool {
	trimmed := strings.TrimSpace(line)
	if trimmed == "" {
		return true
	}
	if strings.HasPrefix(trimmed, "#") {
		// Comments are skipped unread, whatever their encoding; one that would make a row
		// of the header's width may be a source whose name starts with '#'.
		if rd.h == nil {
			rd.lastComment, rd.lastCommentLine = trimmed, lineNo
		} else if fields, bad, _, _ := splitFields(strings.TrimPrefix(trimmed, "#")); bad == 0 && len(fields) == len(rd.h.names) && len(fields) > 1 {
			rd.warnings = append(rd.warnings, Problem{Line: lineNo, Reason: fmt.Sprintf(
				"line skipped as a comment, though it has the header's %d fields; if it is a source whose name starts with '#', quote the name (\"#...\")", len(fields))})
		}
		return true
	}
	if !utf8.ValidString(line) {
		rd.ps.add(Problem{Line: lineNo, Reason: "line is not valid UTF-8 text"})
		return rd.h != nil
	}
	fields, bad, badText, reason := splitFields(line)
	if bad > 0 {
		p := Problem{Line: lineNo, Column: bad, Value: badText, Reason: reason}
		if rd.h != nil && bad <= len(rd.h.names) {
			p.ColumnName = rd.h.names[bad-1]
		}
		rd.ps.add(p)
		return rd.h != nil
	}
	blank := true
	for _, f := range fields {
		if f != "" {
			blank = false
			break
		}
	}
	if blank {
		return true
	}
	if rd.h == nil {
		rd.header(fields, lineNo)
		return rd.ps.count() == 0
	}
	rd.row(fields, lineNo)
	return true
}

// header reads the header row.
func (rd *reader) header(fields []string, lineNo int) {
	h := &header{line: lineNo, names: fields}
	for c := range h.index {
		h.index[c] = -1
	}
	if len(fields) == 1 {
		for _, sep := range []struct{ char, name string }{{"\t", "tabs"}, {";", "semicolons"}, {"|", "vertical bars"}} {
			if strings.Count(fields[0], sep.char) > 0 {
				rd.ps.add(Problem{Line: lineNo, Column: 1, Value: fields[0], Reason: fmt.Sprintf(
					"the header is one field holding %s: the file seems to be separated by %s, and a catalog is separated by commas (CSV); save it as comma-separated values", sep.name, sep.name)})
				return
			}
		}
	}
	// Problems of header fields have the header text as their value; the
	// list of known columns is given once.
	unknown := 0
	listed := false
	known := func() string {
		if listed {
			return ""
		}
		listed = true
		return "; " + rd.known()
	}
	for i, f := range fields {
		p := Problem{Line: lineNo, Column: i + 1, Value: f}
		if f == "" {
			p.Reason = "empty column name; every column needs a name" + known()
			rd.ps.add(p)
			continue
		}
		c, ok := rd.column(f)
		if !ok {
			unknown++
			p.Reason = "unknown column"
			if s := rd.suggest(f); s != "" {
				p.Reason += fmt.Sprintf(" (did you mean %q?)", s)
			}
			p.Reason += known()
			rd.ps.add(p)
			continue
		}
		if j := h.index[c]; j >= 0 {
			p.ColumnName = columnNames[c]
			p.Reason = fmt.Sprintf("column given twice (also field %d)", j+1)
			rd.ps.add(p)
			continue
		}
		h.index[c] = i
	}
	missing := func(c column, reason string) {
		rd.ps.add(Problem{Line: lineNo, ColumnName: columnNames[c], Reason: reason})
	}
	if rd.places {
		rd.placesHeader(h, lineNo)
		return
	}
	if !h.has(colName) {
		reason := "missing required column name"
		if unknown > 0 && rd.lastComment != "" && commentIsHeader(rd.lastComment) {
			reason += fmt.Sprintf(" (the header seems to be commented out on line %d: remove its '#')", rd.lastCommentLine)
		}
		missing(colName, reason)
	}
	eq := h.has(colRA) || h.has(colDec)
	gal := h.has(colL) || h.has(colB)
	if !eq && !gal {
		rd.ps.add(Problem{Line: lineNo, Reason: "missing position columns: expected ra and dec, or l and b"})
	}
	for _, pair := range [][2]column{{colRA, colDec}, {colL, colB}} {
		a, b := pair[0], pair[1]
		if h.has(a) && !h.has(b) {
			missing(b, fmt.Sprintf("missing column %s (%s is given; a position needs both)", columnNames[b], h.label(a)))
		}
		if h.has(b) && !h.has(a) {
			missing(a, fmt.Sprintf("missing column %s (%s is given; a position needs both)", columnNames[a], h.label(b)))
		}
	}
	if !h.has(colPlx) {
		missing(colPlx, "missing required column parallax")
	}
	for _, pair := range valueErrorPairs {
		v, e := pair[0], pair[1]
		if v == colPlx && !h.has(colPlx) {
			continue // reported above
		}
		if h.has(v) && !h.has(e) {
			missing(e, fmt.Sprintf("missing column %s (%s is given; every value needs its uncertainty)", columnNames[e], h.label(v)))
		}
		if h.has(e) && !h.has(v) {
			missing(v, fmt.Sprintf("missing column %s (its uncertainty %s is given)", columnNames[v], h.label(e)))
		}
	}
	if !h.has(colPlx) && !h.has(colPlxErr) {
		missing(colPlxErr, "missing required column parallax_err")
	}
	rd.h = h
}

// commentIsHeader reports whether a comment line, without its '#', would
// make a header naming only known columns, name among them.
func commentIsHeader(comment string) bool {
	fields, bad, _, _ := splitFields(strings.TrimPrefix(comment, "#"))
	if bad > 0 {
		return false
	}
	name := false
	for _, f := range fields {
		c, ok := lookupColumn(f)
		if !ok {
			return false
		}
		name = name || c == colName
	}
	return name
}

// unitWords are the units and unit-like words a row of units under a header may hold,
// lower case, without brackets.
var unitWords = map[string]bool{
	"deg": true, "degree": true, "degrees": true, "°": true, "rad": true,
	"mas": true, "arcsec": true, "mas/yr": true, "mas/a": true, "mas yr-1": true, "mas yr^-1": true, "masyr-1": true,
	"km/s": true, "km s-1": true, "km s^-1": true, "kms-1": true, "kpc": true, "pc": true,
	"h": true, "hms": true, "dms": true, "hh:mm:ss": true, "dd:mm:ss": true, "hh:mm:ss.s": true, "dd:mm:ss.s": true,
	"text": true, "string": true, "str": true, "-": true, "unit": true, "units": true,
}

// unitsRow reports whether a row looks like a row of units: at least two fields, every
// field blank or a unit word (brackets allowed), and at least one numeric column holding
// one.
func (rd *reader) unitsRow(fields []string) bool {
	units := 0
	for i, f := range fields {
		w := strings.ToLower(strings.Trim(f, "[]() "))
		if w == "" {
			continue
		}
		if !unitWords[w] {
			return false
		}
		if c, ok := lookupColumn(rd.h.names[i]); ok && columnUnits[c] != "" {
			units++
		}
	}
	return units >= 2
}

// nonBlank returns the fields that are not blank.
func nonBlank(fields []string) []string {
	var out []string
	for _, f := range fields {
		if f != "" {
			out = append(out, f)
		}
	}
	return out
}

// suggestColumn returns the canonical column nearest to an unknown name, or
// "" if none is close (see spelling.Nearest).
func suggestColumn(name string) string {
	return spelling.Nearest(name, columnNames[:])
}

// value returns the trimmed field of column c in the current row, or "" if
// the header has no such column.
func (rd *reader) value(c column) string {
	if !rd.h.has(c) {
		return ""
	}
	return rd.fields[rd.h.index[c]]
}

func (rd *reader) given(c column) bool { return rd.value(c) != "" }

// bad records a problem with column c of the current row.
func (rd *reader) bad(c column, reason string) {
	rd.rowGood = false
	p := Problem{Line: rd.lineNo, ColumnName: columnNames[c], Reason: reason}
	if rd.h.has(c) {
		p.Column = rd.h.index[c] + 1
		p.ColumnName = rd.h.label(c)
		p.Value = rd.value(c)
	}
	rd.ps.add(p)
}

// row reads one data row.
func (rd *reader) row(fields []string, lineNo int) {
	rd.fields, rd.lineNo, rd.rowGood = fields, lineNo, true
	h := rd.h
	if n, want := len(fields), len(h.names); n != want {
		p := Problem{Line: lineNo, Reason: fmt.Sprintf("row has %d fields, the header has %d", n, want)}
		if n < want {
			p.Column, p.ColumnName = n+1, h.names[n]
		} else {
			p.Column, p.Value = want+1, fields[want]
		}
		rd.ps.add(p)
		return
	}
	rd.rows++
	if rd.rows == 1 && rd.unitsRow(fields) {
		rd.ps.add(Problem{Line: lineNo, Reason: fmt.Sprintf(
			"this row under the header looks like units (%s), not a source: the format fixes every column's unit (see the list of columns); remove the row or start it with '#'",
			strings.Join(nonBlank(fields), ", "))})
		return
	}
	if rd.places {
		rd.place(lineNo)
		return
	}
	s := Source{Line: lineNo}

	s.Name = rd.value(colName)
	switch prev, dup := rd.seen[s.Name]; {
	case s.Name == "":
		rd.bad(colName, "name is required")
	case !printable(s.Name):
		rd.bad(colName, "name must not hold control characters")
	case dup:
		rd.bad(colName, fmt.Sprintf("duplicate name: also on line %d", prev))
	default:
		rd.seen[s.Name] = lineNo
	}

	rd.position(&s)

	switch {
	case !rd.given(colPlx) && !rd.given(colPlxErr):
		rd.bad(colPlx, fmt.Sprintf("parallax is required (mas), with its uncertainty %s", rd.h.label(colPlxErr)))
	case !rd.given(colPlx):
		rd.uncertainty(colPlxErr)
		rd.bad(colPlx, "parallax is required (mas)")
	case !rd.given(colPlxErr):
		rd.number(colPlx)
		rd.bad(colPlxErr, fmt.Sprintf("%s is required (mas)", rd.h.label(colPlxErr)))
	default:
		s.Parallax = rd.measurement(colPlx, colPlxErr)
	}

	eqPM := rd.given(colPMRA) || rd.given(colPMRAErr) || rd.given(colPMDec) || rd.given(colPMDecErr)
	galPM := rd.given(colPML) || rd.given(colPMLErr) || rd.given(colPMB) || rd.given(colPMBErr)
	switch {
	case eqPM && galPM:
		rd.bad(rd.firstGiven(colPML, colPMLErr, colPMB, colPMBErr),
			fmt.Sprintf("row gives proper motions in both frames (%s/%s and %s/%s); give at most one",
				h.label(colPMRA), h.label(colPMDec), h.label(colPML), h.label(colPMB)))
	case eqPM:
		s.PM1 = rd.measurement(colPMRA, colPMRAErr)
		s.PM2 = rd.measurement(colPMDec, colPMDecErr)
	case galPM:
		s.PMFrame = Galactic
		s.PM1 = rd.measurement(colPML, colPMLErr)
		s.PM2 = rd.measurement(colPMB, colPMBErr)
	}

	lsr := rd.given(colVLSR) || rd.given(colVLSRErr)
	helio := rd.given(colVHelio) || rd.given(colVHelioErr)
	switch {
	case lsr && helio:
		rd.bad(rd.firstGiven(colVHelio, colVHelioErr),
			fmt.Sprintf("row gives both %s and %s; give at most one", h.label(colVLSR), h.label(colVHelio)))
	case lsr:
		s.VelLSR = true
		s.Vel = rd.measurement(colVLSR, colVLSRErr)
	case helio:
		s.Vel = rd.measurement(colVHelio, colVHelioErr)
	}

	switch arm := rd.value(colArm); {
	case !printable(arm):
		rd.bad(colArm, "arm label must not hold control characters")
	case arm != "?":
		s.Arm = arm
	}

	if rd.rowGood {
		rd.sources = append(rd.sources, s)
	}
}

// firstGiven returns the first of cols that is filled in the current row.
func (rd *reader) firstGiven(cols ...column) column {
	for _, c := range cols {
		if rd.given(c) {
			return c
		}
	}
	return cols[0]
}

// position reads the row's position into s.
func (rd *reader) position(s *Source) {
	h := rd.h
	eq := rd.given(colRA) || rd.given(colDec)
	gal := rd.given(colL) || rd.given(colB)
	switch {
	case eq && gal:
		rd.bad(rd.firstGiven(colL, colB), fmt.Sprintf("row gives both %s/%s and %s/%s; give exactly one position",
			h.label(colRA), h.label(colDec), h.label(colL), h.label(colB)))
		return
	case !eq && !gal:
		switch {
		case h.has(colRA) && h.has(colL):
			rd.bad(colRA, "no position: expected ra and dec, or l and b")
		case h.has(colRA):
			rd.bad(colRA, "no position: expected ra and dec")
		default:
			rd.bad(colL, "no position: expected l and b")
		}
		return
	}
	lon, lat := colRA, colDec
	if gal {
		s.Frame = Galactic
		lon, lat = colL, colB
	}
	for _, pair := range [][2]column{{lon, lat}, {lat, lon}} {
		if !rd.given(pair[0]) {
			rd.bad(pair[0], fmt.Sprintf("%s is blank but %s is given; a position needs both", h.label(pair[0]), h.label(pair[1])))
		}
	}
	if rd.given(lon) {
		s.Lon = rd.angle(lon)
	}
	if rd.given(lat) {
		s.Lat = rd.angle(lat)
	}
}

// angle parses the angle in column c (ra, dec, l or b) of the current row,
// checks its range and returns it in degrees; l is wrapped into [0, 360).
func (rd *reader) angle(c column) float64 {
	text := rd.value(c)
	sexa := c == colRA || c == colDec
	v, st := parseNumber(text)
	switch {
	case st == numberNonFinite:
		rd.bad(c, "value must be finite")
		return 0
	case st == numberOverflow:
		rd.bad(c, "number out of range")
		return 0
	case st == numberMalformed && sexa && looksSexagesimal(text):
		var reason string
		if v, reason = parseSexagesimal(text, c == colRA); reason != "" {
			rd.bad(c, reason)
			return 0
		}
	case st == numberMalformed && sexa:
		if c == colRA {
			rd.bad(c, "expected decimal degrees or sexagesimal hh:mm:ss.s")
		} else {
			rd.bad(c, "expected decimal degrees or sexagesimal ±dd:mm:ss.s")
		}
		return 0
	case st == numberMalformed && looksSexagesimal(text):
		rd.bad(c, "expected decimal degrees (Galactic coordinates are not read in sexagesimal form)")
		return 0
	case st == numberMalformed:
		rd.bad(c, "expected decimal degrees")
		return 0
	}
	switch c {
	case colRA:
		if !(v >= 0 && v < 360) {
			rd.bad(c, "right ascension must be in [0, 360) deg (below 24h)")
		}
	case colDec:
		if !(v >= -90 && v <= 90) {
			rd.bad(c, "declination must be in [-90, 90] deg")
		}
	case colB:
		if !(v >= -90 && v <= 90) {
			rd.bad(c, "b must be in [-90, 90] deg")
		}
	case colL:
		if !(v >= -360 && v <= 360) {
			rd.bad(c, "l must be in [-360, 360] deg (it is wrapped into [0, 360))")
			return 0
		}
		v = wrapDegrees(v)
	}
	return v
}

// wrapDegrees maps a longitude in [−360, 360] into [0, 360).
func wrapDegrees(v float64) float64 {
	if v < 0 {
		v += 360
	}
	if v >= 360 {
		v -= 360
	}
	return v
}

// number parses the value in column c of the current row as a finite number.
func (rd *reader) number(c column) float64 {
	v, st := parseNumber(rd.value(c))
	switch st {
	case numberMalformed:
		rd.bad(c, fmt.Sprintf("expected a number (%s)", columnUnits[c]))
	case numberNonFinite:
		rd.bad(c, "value must be finite")
	case numberOverflow:
		rd.bad(c, "number out of range")
	}
	return v
}

// uncertainty parses the value in column c of the current row as an
// uncertainty: positive and finite.
func (rd *reader) uncertainty(c column) float64 {
	v, st := parseNumber(rd.value(c))
	switch {
	case st == numberMalformed:
		rd.bad(c, fmt.Sprintf("expected a number (%s)", columnUnits[c]))
	case st != numberOK || !(v > 0) || math.IsInf(v, 0):
		rd.bad(c, "uncertainty must be positive and finite")
	}
	return v
}

// measurement reads a value and its uncertainty from columns v and e of the
// current row: both blank (absent) or both given.
func (rd *reader) measurement(v, e column) Measurement {
	switch gv, ge := rd.given(v), rd.given(e); {
	case !gv && !ge:
		return Measurement{}
	case gv && !ge:
		rd.number(v)
		rd.bad(e, fmt.Sprintf("%s is blank but %s is given; a value needs its uncertainty", rd.h.label(e), rd.h.label(v)))
		return Measurement{}
	case !gv && ge:
		rd.uncertainty(e)
		rd.bad(v, fmt.Sprintf("%s is blank but its uncertainty %s is given", rd.h.label(v), rd.h.label(e)))
		return Measurement{}
	}
	return Measurement{Value: rd.number(v), Err: rd.uncertainty(e), OK: true}
}
