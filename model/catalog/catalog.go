package catalog

import (
	"fmt"
	"os"
)

// PositionFrame names the coordinates in which a catalog gives a position or
// a proper motion.
type PositionFrame int

const (
	// Equatorial is ICRS right ascension and declination (α, δ); proper
	// motions (μα* = μα cos δ, μδ).
	Equatorial PositionFrame = iota
	// Galactic is Galactic longitude and latitude (l, b); proper motions
	// (μl* = μl cos b, μb).
	Galactic
)

// String returns "equatorial" or "galactic".
func (f PositionFrame) String() string {
	switch f {
	case Equatorial:
		return "equatorial"
	case Galactic:
		return "galactic"
	}
	return fmt.Sprintf("PositionFrame(%d)", int(f))
}

// Measurement is a measured value with its 1σ uncertainty, in the unit of
// its column. OK is false when the catalog leaves the quantity blank; Value
// and Err are then zero. When OK is true, Value is finite and Err is
// positive and finite.
type Measurement struct {
	Value, Err float64
	OK         bool
}

// Source is one row of a catalog.
type Source struct {
	// Name is the source's name, unique within its catalog.
	Name string
	// Line is the line of the catalog file the source was read from (0 for
	// a source not read from a file).
	Line int
	// Frame says whether Lon, Lat are ICRS (ra, dec) or Galactic (l, b).
	Frame PositionFrame
	// Lon and Lat are the position in degrees, in Frame: right ascension in
	// [0, 360) and declination in [−90, 90], or l in [0, 360) and b in
	// [−90, 90].
	Lon, Lat float64
	// Parallax is ϖ ± σϖ in mas; always present (OK), and ϖ may be zero
	// or negative.
	Parallax Measurement
	// PMFrame is the frame of the proper motions: (PM1, PM2) is
	// (μα cos δ, μδ) for Equatorial and (μl cos b, μb) for Galactic, in
	// mas/yr. Either component may be absent; when both are, PMFrame is
	// Equatorial.
	PMFrame  PositionFrame
	PM1, PM2 Measurement
	// Vel is the line-of-sight velocity in km/s: in the LSR when VelLSR is
	// true, heliocentric otherwise. When Vel is absent, VelLSR is false.
	VelLSR bool
	Vel    Measurement
	// Arm is the arm the source is tied to; "" leaves it free.
	Arm string
}

// Catalog is a catalog read from a file.
type Catalog struct {
	// Path is the name the catalog was read under.
	Path string
	// Header holds the column names as written in the file (trimmed).
	Header []string
	// Sources holds the sources in file order.
	Sources []Source
	// Warnings lists what was read but looks like a mistake, such as a comment line
	// with as many fields as the header; they do not stop the catalog being read.
	Warnings []Problem
}

// ReadFile reads the catalog in the named file; see [Read].
func ReadFile(path string) (*Catalog, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("reading catalog: %w", err)
	}
	defer f.Close()
	return Read(f, path)
}
