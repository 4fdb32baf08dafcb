package catalog

import (
	"fmt"
	"io"
	"os"
)

// Place is one row of a places file: a position and a distance, at which a source would be
// seen to do what the model predicts.
type Place struct {
	// Name is the place's name; "" when the file gives none.
	Name string
	// Line is the line of the file the place was read from.
	Line int
	// Frame says whether Lon, Lat are ICRS (ra, dec) or Galactic (l, b).
	Frame PositionFrame
	// Lon and Lat are the position in degrees, in Frame, in the ranges of Source.
	Lon, Lat float64
	// Distance from the Sun (kpc), positive.
	Distance float64
}

// MaxPlaceDistance is the greatest distance (kpc) a places file may give.
const MaxPlaceDistance = 1000.0

// ReadPlaces reads a places file from r: CSV in the format of a catalog (comments, quoting,
// sexagesimal ra and dec, the same positioned errors) whose columns are a position, ra and
// dec or l and b, and distance (kpc), with name optional. name (usually the file's path) is
// used in messages. If anything is wrong, ReadPlaces returns no places and an [*Error]
// listing the problems.
func ReadPlaces(r io.Reader, name string) ([]Place, error) {
	rd := reader{ps: problems{err: Error{File: name, Kind: "places file"}}, seen: map[string]int{}, places: true}
	if err := rd.read(r, name); err != nil {
		return nil, err
	}
	return rd.placeList, nil
}

// ReadPlacesFile reads the places file at path; see [ReadPlaces].
func ReadPlacesFile(path string) ([]Place, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("reading places: %w", err)
	}
	defer f.Close()
	return ReadPlaces(f, path)
}

// what names the kind of file being read, for messages.
func (rd *reader) what() string {
	if rd.places {
		return "places"
	}
	return "catalog"
}

// rowsName names the rows of the kind of file being read, for messages.
func (rd *reader) rowsName() string {
	if rd.places {
		return "places"
	}
	return "sources"
}

// placesHeader checks the header of a places file: one position pair and distance.
func (rd *reader) placesHeader(h *header, lineNo int) {
	eq := h.has(colRA) || h.has(colDec)
	gal := h.has(colL) || h.has(colB)
	switch {
	case !eq && !gal:
		rd.ps.add(Problem{Line: lineNo, Reason: "missing position columns: expected ra and dec, or l and b"})
	case eq && gal:
		rd.ps.add(Problem{Line: lineNo, Reason: "both ra,dec and l,b columns: a places file gives one position pair"})
	}
	for _, pair := range [][2]column{{colRA, colDec}, {colL, colB}} {
		a, b := pair[0], pair[1]
		if h.has(a) && !h.has(b) {
			rd.ps.add(Problem{Line: lineNo, ColumnName: columnNames[b], Reason: fmt.Sprintf("missing column %s (%s is given; a position needs both)", columnNames[b], h.label(a))})
		}
		if h.has(b) && !h.has(a) {
			rd.ps.add(Problem{Line: lineNo, ColumnName: columnNames[a], Reason: fmt.Sprintf("missing column %s (%s is given; a position needs both)", columnNames[a], h.label(b))})
		}
	}
	if !h.has(colDistance) {
		rd.ps.add(Problem{Line: lineNo, ColumnName: columnNames[colDistance], Reason: "missing required column distance (kpc)"})
	}
	rd.h = h
}

// place reads one row of a places file.
func (rd *reader) place(lineNo int) {
	p := Place{Line: lineNo, Name: rd.value(colName)}
	if !printable(p.Name) {
		rd.bad(colName, "name must not hold control characters")
	}
	var s Source
	rd.position(&s)
	p.Frame, p.Lon, p.Lat = s.Frame, s.Lon, s.Lat
	if !rd.given(colDistance) {
		rd.bad(colDistance, "distance is required (kpc)")
	} else {
		good := rd.rowGood
		rd.rowGood = true
		p.Distance = rd.number(colDistance)
		if rd.rowGood && !(p.Distance > 0 && p.Distance <= MaxPlaceDistance) {
			rd.bad(colDistance, fmt.Sprintf("distance must be positive and at most %g kpc", MaxPlaceDistance))
		}
		rd.rowGood = rd.rowGood && good
	}
	if rd.rowGood {
		rd.placeList = append(rd.placeList, p)
	}
}
