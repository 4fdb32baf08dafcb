package config

import (
	"crypto/sha256"
	"encoding/hex"
	"fmt"
	"math"
	"regexp"
	"strconv"
	"strings"
	"unicode/utf8"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

// Resolved returns the configuration as TOML with every default written out
// and every path absolute. Load (or Parse) accepts it and gives back the same
// configuration, so a run directory can keep the exact settings of its run.
func (c *Config) Resolved() []byte {
	return c.write(false)
}

// Hash returns a hexadecimal SHA-256 digest of the resolved configuration,
// leaving out the settings that do not change the chain: the run directory
// (output), threads and checkpoint_every, and the configuration's own name.
// Two configurations with the same hash sample the same posterior with the
// same random streams. The catalog enters by its path only, not its content.
func (c *Config) Hash() string {
	sum := sha256.Sum256(c.write(true))
	return hex.EncodeToString(sum[:])
}

// write renders the configuration; for the hash, settings that do not change
// the chain are left out.
func (c *Config) write(forHash bool) []byte {
	w := tomlWriter{arms: c.armNames()}
	if !forHash {
		w.comment("Resolved configuration %s: every setting written out, every path absolute.", quoteString(c.Name))
		w.comment("See \"mirabilis help config\" for the meaning of each setting.")
	}
	w.str("catalog", c.Catalog, "")
	if !forHash {
		w.str("output", c.Output, "run directory")
	}

	w.table("rotation")
	w.str("curve", string(c.Rotation.Curve), "linear | power | nodes")
	w.num("core_radius", c.Rotation.CoreRadius, "kpc, solid-body rise inside")
	if c.Rotation.Curve == model.CurveNodes {
		w.list("node_radii", c.Rotation.NodeRadii, "kpc")
		w.str("interpolation", string(c.Rotation.Interpolation), "monotone | linear")
	}

	w.table("params")
	for _, p := range c.Params {
		w.prior(p.Name, p)
	}
	if len(c.DerivedPriors) > 0 {
		w.table("derived_priors")
		for _, p := range c.DerivedPriors {
			w.prior(p.Name, p)
		}
	}

	for _, a := range c.Arms {
		w.arrayTable("arm")
		w.str("name", a.Name, "")
		w.num("ref_azimuth", a.RefAzimuth, "deg")
		w.list("azimuth_range", a.AzimuthRange[:], "deg")
		w.prior("radius", Param{Name: a.Name + param.SuffixRref, Prior: a.Radius})
		w.prior("pitch", Param{Name: a.Name + param.SuffixPitch, Prior: a.Pitch})
		if a.Kinked() {
			w.prior("pitch2", Param{Name: a.Name + param.SuffixPitch2, Prior: a.Pitch2})
			w.prior("kink", Param{Name: a.Name + param.SuffixKink, Prior: a.Kink})
		}
		w.prior("width", Param{Name: a.Name + param.SuffixWidth, Prior: a.Width})
	}

	m := c.Membership
	w.table("membership")
	w.num("field_scale", m.FieldScale, "kpc")
	w.num("concentration", m.Concentration, "symmetric Dirichlet")
	w.num("arm_end_softening", m.ArmEndSoftening, "deg")

	l := c.Likelihood
	w.table("likelihood")
	w.str("error_model", string(l.Errors), "gaussian | tolerant | student")
	w.num("student_dof", l.StudentDOF, "")
	w.str("distance_prior", string(l.DistancePrior), "galaxy | parallax")
	w.str("vertical", string(l.Vertical), "gaussian | none")
	w.list("distance_range", l.DistanceRange[:], "kpc")
	w.num("tolerance", l.Tolerance, "ln L per source")
	w.num("inner_radius", l.InnerRadius, "kpc")
	w.line("exclude_inner", strconv.FormatBool(l.ExcludeInner), "")
	w.num("bar_dispersion", l.BarDispersion, "km/s")
	w.num("bar_softening", l.BarSoftening, "kpc")
	w.inline("pilot_start", l.PilotStart, "")
	w.inline("pilot_spread", l.PilotSpread, "")

	if sel := c.Selection; sel.Active() {
		w.table("selection")
		if sel.Declination != nil {
			w.list("declination", sel.Declination, "deg, ICRS")
		}
		if len(sel.ExcludeLongitude) > 0 {
			parts := make([]string, len(sel.ExcludeLongitude))
			for i, r := range sel.ExcludeLongitude {
				parts[i] = "[" + formatFloat(r[0]) + ", " + formatFloat(r[1]) + "]"
			}
			w.line("exclude_longitude", "["+strings.Join(parts, ", ")+"]", "deg, Galactic")
		}
		if sel.HalfDistance != 0 {
			w.line("completeness", fmt.Sprintf("{ half_distance = %s, softness = %s }", formatFloat(sel.HalfDistance), formatFloat(sel.Softness)), "kpc")
		}
	}

	s := c.Sampler
	w.table("sampler")
	w.integer("walkers", int64(s.Walkers), "")
	w.integer("steps", int64(s.Steps), "0 = stop on its own")
	w.integer("max_steps", int64(s.MaxSteps), "")
	w.integer("burn", int64(s.Burn), "")
	w.line("seed", strconv.FormatUint(s.Seed, 10), "")
	if !forHash {
		w.integer("threads", int64(s.Threads), "0 = all cores")
		w.integer("checkpoint_every", int64(s.CheckpointEvery), "steps")
	}
	// The hash leaves out a zero independence weight, so that it is the same as before
	// the setting existed and run directories made then still resume.
	independence := ""
	if !forHash || s.Moves.Independence != 0 {
		independence = ", independence = " + formatFloat(s.Moves.Independence)
	}
	w.line("moves", fmt.Sprintf("{ stretch = %s, differential_evolution = %s, walk = %s, differential_slice = %s, gaussian_slice = %s%s }",
		formatFloat(s.Moves.Stretch), formatFloat(s.Moves.DiffEvolution), formatFloat(s.Moves.Walk),
		formatFloat(s.Moves.DiffSlice), formatFloat(s.Moves.GaussSlice), independence), "relative weights")
	w.line("adapt_weights", strconv.FormatBool(s.AdaptWeights), "during burn-in")
	w.num("min_ess", s.MinESS, "with steps = 0")
	w.num("stretch_scale", s.StretchScale, "")
	return []byte(w.b.String())
}

// tomlWriter writes the few TOML forms the configuration needs.
type tomlWriter struct {
	b    strings.Builder
	arms []string // the arms' names, for the units of their parameters
}

func (w *tomlWriter) comment(format string, args ...any) {
	fmt.Fprintf(&w.b, "# "+format+"\n", args...)
}

func (w *tomlWriter) table(name string) { fmt.Fprintf(&w.b, "\n[%s]\n", name) }

func (w *tomlWriter) arrayTable(name string) { fmt.Fprintf(&w.b, "\n[[%s]]\n", name) }

func (w *tomlWriter) line(key, value, note string) {
	if note != "" {
		fmt.Fprintf(&w.b, "%s = %s  # %s\n", quoteKey(key), value, note)
		return
	}
	fmt.Fprintf(&w.b, "%s = %s\n", quoteKey(key), value)
}

func (w *tomlWriter) str(key, value, note string) { w.line(key, quoteString(value), note) }

func (w *tomlWriter) num(key string, x float64, note string) { w.line(key, formatFloat(x), note) }

func (w *tomlWriter) integer(key string, n int64, note string) {
	w.line(key, strconv.FormatInt(n, 10), note)
}

func (w *tomlWriter) list(key string, xs []float64, note string) {
	parts := make([]string, len(xs))
	for i, x := range xs {
		parts[i] = formatFloat(x)
	}
	w.line(key, "["+strings.Join(parts, ", ")+"]", note)
}

func (w *tomlWriter) prior(key string, p Param) {
	if p.Prior == nil {
		return
	}
	note := param.Unit(p.Name, w.arms)
	if key != p.Name {
		note = strings.TrimSpace(p.Name + ", " + note)
		note = strings.TrimSuffix(note, ",")
	}
	w.str(key, p.Prior.String(), note)
}

func (w *tomlWriter) inline(key string, m map[string]float64, note string) {
	keys := sortedKeys(m)
	if len(keys) == 0 {
		w.line(key, "{}", note)
		return
	}
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = quoteKey(k) + " = " + formatFloat(m[k])
	}
	w.line(key, "{ "+strings.Join(parts, ", ")+" }", note)
}

// formatFloat writes x as a TOML float that reads back to exactly x.
func formatFloat(x float64) string {
	switch {
	case math.IsNaN(x):
		return "nan"
	case math.IsInf(x, 1):
		return "inf"
	case math.IsInf(x, -1):
		return "-inf"
	}
	s := strconv.FormatFloat(x, 'g', -1, 64)
	if !strings.ContainsAny(s, ".e") {
		s += ".0"
	}
	return s
}

var bareKey = regexp.MustCompile(`^[A-Za-z0-9_-]+$`)

func quoteKey(k string) string {
	if bareKey.MatchString(k) {
		return k
	}
	return quoteString(k)
}

// quoteString writes a TOML basic string.
func quoteString(s string) string {
	var b strings.Builder
	b.WriteByte('"')
	for i := 0; i < len(s); {
		r, size := utf8.DecodeRuneInString(s[i:])
		i += size
		switch {
		case r == '"':
			b.WriteString(`\"`)
		case r == '\\':
			b.WriteString(`\\`)
		case r == '\n':
			b.WriteString(`\n`)
		case r == '\t':
			b.WriteString(`\t`)
		case r == '\r':
			b.WriteString(`\r`)
		case r < 0x20 || r == 0x7f:
			fmt.Fprintf(&b, `\u%04X`, r)
		default:
			b.WriteRune(r)
		}
	}
	b.WriteByte('"')
	return b.String()
}
