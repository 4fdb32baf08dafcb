// Package plots draws the figures of a mirabilis fit from plain data: the
// face-on map of the Galactic plane with arms, sources and motions; the
// rotation curve with its credible bands; the pairs plot (one- and two-dimensional marginals) of the
// posterior; the sampler's walker traces; and the per-source arm membership.
//
// Every figure is composed of small plotters, each a value with a
// Plot(draw.Canvas, *plot.Plot) method and, where it helps, DataRange and
// Thumbnail methods, so that a figure can be rebuilt or extended from its
// parts. Inputs are slices and small structs defined here; the package
// imports nothing else of the project.
//
// Conventions:
//
//   - Lengths in kpc, speeds in km/s, angles in radians unless a name says
//     degrees.
//   - A point in the plane is given as Polar{R, Beta}: Galactocentric radius R
//     and azimuth β, 0 at the Sun and increasing in the direction of Galactic
//     rotation.
//   - The face-on map is drawn as seen from the north Galactic pole, with the
//     Galactic centre at the origin and the Sun at (0, −R0). From that side the
//     Galaxy turns clockwise, so the map coordinates are
//     x = −R sin β, y = −R cos β (see Polar.XY).
//   - Membership probabilities of a source are a slice indexed by component:
//     0 is the field, k ≥ 1 is arm k, which is Arms[k−1] of the figure's input.
//
// Figures are saved with Save, which picks the format from the file name's
// extension (.png, .svg, .pdf; also .eps, .jpg, .tif).
package plots
