package catalog

// HelpText is the user-facing description of the catalog format, shown by
// "mirabilis help catalog".
const HelpText = `A catalog is a CSV file with one row per parallax source and a header row
naming the columns.

  - Text is UTF-8 (a byte-order mark is fine); lines end in LF or CRLF.
  - Lines starting with # (after any spaces) are comments, before or after
    the header; a comment is always a whole line. A source whose name starts
    with # needs the name quoted when it is the first field ("#m9"); a comment
    with as many fields as the header is kept as a comment, with a warning.
    Blank lines, and rows whose fields are all blank, are skipped.
  - Fields are separated by commas, not tabs or semicolons. Units are fixed
    by the format (below): no row of units under the header.
  - Column names are case-insensitive; spaces around names and values are
    ignored. Columns may come in any order. "_error" may be written for "_err".
  - A field may be put in double quotes (write "" for a quote inside it),
    for example a name holding a comma. A quoted field ends on its own line.
  - Unknown columns are an error, so that a misspelt column is not silently
    dropped.

Columns (units are fixed):

  name                     required; unique within the catalog
  ra, dec                  deg, ICRS; decimal degrees or sexagesimal
                           (ra 18:00:00, 18 00 00 or 18h00m00s = 270 deg;
                           dec -05:30:00, -05 30 00 or -05d30m00s = -5.5 deg)
  l, b                     deg, Galactic; decimal degrees only
                           (l from -360 to 360 is wrapped into [0, 360))
  parallax, parallax_err   mas; required; the parallax may be zero or negative
  pmra, pmra_err           mas/yr; mu_alpha* = mu_alpha cos(dec)
  pmdec, pmdec_err         mas/yr
  pml, pml_err             mas/yr; mu_l* = mu_l cos(b)
  pmb, pmb_err             mas/yr
  vlsr, vlsr_err           km/s; line-of-sight velocity in the LSR
  vhelio, vhelio_err       km/s; heliocentric line-of-sight velocity
  arm                      arm label, e.g. Corvid; blank or ? leaves the source
                           free to belong to any arm or to none

Rules:

  - Every source needs a name, a position and a parallax with its error.
  - The header may hold both ra/dec and l/b; each row then fills exactly one
    pair and leaves the other blank. Likewise a row may give proper motions
    in at most one frame (pmra/pmdec or pml/pmb) and at most one of vlsr
    and vhelio.
  - Proper motions, velocities and their errors may be blank: the fit then
    leaves that term out for the source. A value and its error are given
    together or left blank together; pmra and pmdec (or pml and pmb) stand
    apart, each with its own error.
  - Numbers are decimal (1.25, -0.3, 4e-2) and finite; every error must be
    positive. ra lies in [0, 360), dec and b in [-90, 90].
  - Sexagesimal angles have two or three parts; only the last may have a
    fraction, minutes and seconds lie in [0, 60), and the sign applies to the
    whole angle (-00:30:00 is -0.5 deg). A plain number is always degrees,
    for ra too.

A catalog with any bad row is refused whole. Every problem is reported as
file:line:field (column): value: what was expected, for example

  sources.csv:14:5 (parallax_err): value "-0.02": uncertainty must be positive and finite

Example:

  # mock catalog, invented sources
  name,ra,dec,parallax,parallax_err,pmra,pmra_err,pmdec,pmdec_err,vlsr,vlsr_err,arm
  Corvid-7,18:03:12.4,-21:40:05,0.351,0.021,-0.62,0.05,-2.31,0.07,17.0,5.0,Corvid
  mock-0012,283.6021,+1.0455,0.112,0.030,,,,,44.5,3.0,?
  "Lantern, east knot",95.25,22.1,-0.05,0.06,0.41,0.12,-0.88,0.10,,,
`
