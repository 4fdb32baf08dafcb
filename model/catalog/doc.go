// Package catalog reads and writes the source catalogs of mirabilis: CSV files
// with one row per parallax source (a maser observed by VLBI, a young star from
// an astrometric survey).
//
// # Format
//
// A catalog is UTF-8 CSV text with a header row naming the columns. A leading
// byte-order mark is skipped, lines may end in LF or CRLF, blank lines and
// rows of blank fields are ignored, and lines whose first non-blank character
// is '#' are comments wherever they stand (before or after the header); a
// '#' later in a line is text. A comment is a whole line: a source whose name
// starts with '#' must quote it when the name is the first field ("#m9"), and
// a comment line with the header's number of fields is kept as a comment but
// reported in [Catalog.Warnings]. The separator is the comma: a header that
// is one field holding tabs or semicolons, and a row of units under the
// header, are refused with a hint. Fields may be quoted with double quotes
// ("" inside a quoted field is one quote); a quoted field ends on its own line.
// Column names are matched without regard to case, and spaces around names
// and values are trimmed. Every column is optional except the required ones
// below, columns may come in any order, and a column the format does not know
// is an error. A column named with the suffix "_error" is the same as "_err".
//
//	column                       unit     meaning
//	name                         text     required, unique in the catalog
//	ra, dec                      deg      ICRS position; decimal degrees, or sexagesimal
//	                                      ra "hh:mm:ss.s", dec "±dd:mm:ss.s" (see below)
//	l, b                         deg      Galactic position, decimal degrees only;
//	                                      l in [−360, 360] is wrapped into [0, 360)
//	parallax, parallax_err       mas      required; the parallax may be zero or negative
//	pmra, pmra_err               mas/yr   μα* = μα cos δ
//	pmdec, pmdec_err             mas/yr   μδ
//	pml, pml_err                 mas/yr   μl* = μl cos b
//	pmb, pmb_err                 mas/yr   μb
//	vlsr, vlsr_err               km/s     line-of-sight velocity in the LSR
//	vhelio, vhelio_err           km/s     heliocentric line-of-sight velocity
//	arm                          text     an arm label; blank or "?" leaves the source free
//
// A position is required for every source: the header holds ra and dec, or l
// and b, or both pairs; then each row gives exactly one complete pair and
// leaves the other blank. The same holds, with "at most one" in place of
// "exactly one", for the proper-motion frames (pmra/pmdec against pml/pmb)
// and for the two velocities (vlsr against vhelio). Every kinematic value may
// be blank, which leaves that term out for the source; a value and its
// uncertainty are given together or left blank together, and the two
// proper-motion components stand apart (each with its own uncertainty).
// Numbers are written in decimal (such as 1.25, -0.3 or 4e-2) and must be
// finite; every uncertainty must be positive. Right ascension lies in
// [0, 360), declination and b in [−90, 90].
//
// Sexagesimal positions separate their two or three parts by colons, by
// spaces, or by unit letters: "18:00:00", "18 00 00" and "18h00m00s" are all
// 270°; "-05:30:00", "-05 30 00" and "-05d30m00s" are all −5.5°. The sign
// belongs to the whole angle, so "-00:30:00" is −0.5°. Only the last part may
// have a fraction; minutes and seconds lie in [0, 60). With unit letters the
// last letter may be left out, and a single part is allowed ("12h" is 180°).
// A plain number is always degrees, in right ascension too.
//
// # Errors
//
// [Read] checks the whole file and refuses a catalog with any bad row: it
// returns no catalog and an [*Error] listing every problem (the first
// [MaxProblems] in full), each naming the file, line, field number and
// column, the value and what was expected.
//
// # Writing
//
// [Write] writes sources in canonical form (decimal degrees, the shortest
// decimal that reads back to the same float64) with only the columns they
// need; [Read] returns the same sources.
package catalog
