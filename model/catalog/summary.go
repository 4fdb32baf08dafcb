package catalog

import (
	"fmt"
	"slices"
	"strings"
)

// Summary counts what a catalog holds.
type Summary struct {
	// Sources is the number of sources.
	Sources int
	// Equatorial and Galactic describe the sources whose positions are
	// given as (ra, dec) and as (l, b).
	Equatorial, Galactic Coverage
	// PMRA, PMDec, PML and PMB count the sources with each proper-motion
	// component.
	PMRA, PMDec, PML, PMB int
	// VLSR and VHelio count the sources with an LSR and with a heliocentric
	// line-of-sight velocity.
	VLSR, VHelio int
	// Arms counts the sources tied to each arm, sorted by label; Labelled
	// is their total.
	Arms     []ArmCount
	Labelled int
	// NegativeParallax counts the sources with ϖ < 0.
	NegativeParallax int
	// MinSignificance, MedianSignificance and MaxSignificance are the
	// smallest, median and largest parallax significance ϖ/σϖ (the median
	// of an even count is the mean of the middle two). They are zero for a
	// catalog without sources.
	MinSignificance, MedianSignificance, MaxSignificance float64
}

// ArmCount is the number of sources tied to one arm.
type ArmCount struct {
	Arm     string
	Sources int
}

// Coverage is the extent on the sky of the sources given in one frame, in
// degrees of that frame's coordinates.
type Coverage struct {
	// Sources is the number of sources with positions in this frame; the
	// other fields are zero when it is zero.
	Sources int
	// The longitudes lie on the shortest arc running from LonMin eastward
	// (increasing longitude) to LonMax, of length LonSpan. LonMin exceeds
	// LonMax when the arc passes through 0.
	LonMin, LonMax, LonSpan float64
	// LatMin and LatMax bound the latitudes.
	LatMin, LatMax float64
}

// Summary counts the catalog's sources, their kinematic terms and labels,
// and describes their parallaxes and sky coverage.
func (c *Catalog) Summary() Summary {
	var s Summary
	s.Sources = len(c.Sources)
	var eqLon, eqLat, galLon, galLat, sig []float64
	arms := map[string]int{}
	for _, src := range c.Sources {
		if src.Frame == Galactic {
			galLon, galLat = append(galLon, src.Lon), append(galLat, src.Lat)
		} else {
			eqLon, eqLat = append(eqLon, src.Lon), append(eqLat, src.Lat)
		}
		count := func(m Measurement, n *int) {
			if m.OK {
				*n++
			}
		}
		if src.PMFrame == Galactic {
			count(src.PM1, &s.PML)
			count(src.PM2, &s.PMB)
		} else {
			count(src.PM1, &s.PMRA)
			count(src.PM2, &s.PMDec)
		}
		if src.VelLSR {
			count(src.Vel, &s.VLSR)
		} else {
			count(src.Vel, &s.VHelio)
		}
		if src.Arm != "" {
			arms[src.Arm]++
			s.Labelled++
		}
		if src.Parallax.Value < 0 {
			s.NegativeParallax++
		}
		sig = append(sig, src.Parallax.Value/src.Parallax.Err)
	}
	s.Equatorial = coverage(eqLon, eqLat)
	s.Galactic = coverage(galLon, galLat)
	for arm, n := range arms {
		s.Arms = append(s.Arms, ArmCount{Arm: arm, Sources: n})
	}
	slices.SortFunc(s.Arms, func(a, b ArmCount) int { return strings.Compare(a.Arm, b.Arm) })
	if n := len(sig); n > 0 {
		slices.Sort(sig)
		s.MinSignificance, s.MaxSignificance = sig[0], sig[n-1]
		if n%2 == 1 {
			s.MedianSignificance = sig[n/2]
		} else {
			s.MedianSignificance = (sig[n/2-1] + sig[n/2]) / 2
		}
	}
	return s
}

// coverage finds the shortest arc holding the longitudes (degrees in
// [0, 360)) as the complement of the widest gap between neighbours, and the
// range of the latitudes.
func coverage(lon, lat []float64) Coverage {
	n := len(lon)
	if n == 0 {
		return Coverage{}
	}
	lon = slices.Clone(lon)
	slices.Sort(lon)
	// The gap across 0 comes first, so that it wins ties and the arc is
	// reported without wrapping when it can be.
	gap, start := lon[0]+360-lon[n-1], 0
	for i := 1; i < n; i++ {
		if g := lon[i] - lon[i-1]; g > gap {
			gap, start = g, i
		}
	}
	end := (start + n - 1) % n
	return Coverage{
		Sources: n,
		LonMin:  lon[start],
		LonMax:  lon[end],
		LonSpan: 360 - gap,
		LatMin:  slices.Min(lat),
		LatMax:  slices.Max(lat),
	}
}

// String describes the summary in a few lines of text.
func (s Summary) String() string {
	var b strings.Builder
	fmt.Fprintf(&b, "%d sources (%d with ra/dec, %d with l/b)\n", s.Sources, s.Equatorial.Sources, s.Galactic.Sources)
	fmt.Fprintf(&b, "parallax significance: min %.3g, median %.3g, max %.3g; negative parallaxes: %d\n",
		s.MinSignificance, s.MedianSignificance, s.MaxSignificance, s.NegativeParallax)
	fmt.Fprintf(&b, "proper motions: %d pmra, %d pmdec, %d pml, %d pmb\n", s.PMRA, s.PMDec, s.PML, s.PMB)
	fmt.Fprintf(&b, "line-of-sight velocities: %d vlsr, %d vhelio\n", s.VLSR, s.VHelio)
	fmt.Fprintf(&b, "arm labels: %d", s.Labelled)
	for i, a := range s.Arms {
		sep := ", "
		if i == 0 {
			sep = " ("
		}
		fmt.Fprintf(&b, "%s%s %d", sep, a.Arm, a.Sources)
	}
	if len(s.Arms) > 0 {
		b.WriteString(")")
	}
	b.WriteString("\n")
	for _, f := range []struct {
		name, lon, lat string
		c              Coverage
	}{{"ra/dec", "ra", "dec", s.Equatorial}, {"l/b", "l", "b", s.Galactic}} {
		if f.c.Sources == 0 {
			continue
		}
		wrap := ""
		if f.c.LonMin > f.c.LonMax {
			wrap = " through 0"
		}
		fmt.Fprintf(&b, "sky (%s): %s %.2f to %.2f deg%s (span %.2f), %s %.2f to %.2f deg\n",
			f.name, f.lon, f.c.LonMin, f.c.LonMax, wrap, f.c.LonSpan, f.lat, f.c.LatMin, f.c.LatMax)
	}
	return b.String()
}
