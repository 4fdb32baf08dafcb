package config

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"sort"
	"strings"

	"github.com/mirabilis-astro/mirabilis/internal/spelling"
	toml "github.com/pelletier/go-toml/v2"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

// The document as written, before defaults. Pointers and nil slices mark the
// settings left out.
type fileConfig struct {
	Catalog       *string         `toml:"catalog"`
	Output        *string         `toml:"output"`
	Rotation      *fileRotation   `toml:"rotation"`
	Params        map[string]any  `toml:"params"`
	DerivedPriors map[string]any  `toml:"derived_priors"`
	Arms          []fileArm       `toml:"arm"`
	Membership    *fileMembership `toml:"membership"`
	Likelihood    *fileLikelihood `toml:"likelihood"`
	Selection     *fileSelection  `toml:"selection"`
	Sampler       *fileSampler    `toml:"sampler"`
}

type fileSelection struct {
	Declination      []float64         `toml:"declination"`
	ExcludeLongitude [][]float64       `toml:"exclude_longitude"`
	Completeness     *fileCompleteness `toml:"completeness"`
}

type fileCompleteness struct {
	HalfDistance *float64 `toml:"half_distance"`
	Softness     *float64 `toml:"softness"`
}

type fileRotation struct {
	Curve         *string   `toml:"curve"`
	CoreRadius    *float64  `toml:"core_radius"`
	NodeRadii     []float64 `toml:"node_radii"`
	Interpolation *string   `toml:"interpolation"`
}

type fileArm struct {
	Name         *string   `toml:"name"`
	RefAzimuth   *float64  `toml:"ref_azimuth"`
	AzimuthRange []float64 `toml:"azimuth_range"`
	Radius       any       `toml:"radius"`
	Pitch        any       `toml:"pitch"`
	Pitch2       any       `toml:"pitch2"`
	Kink         any       `toml:"kink"`
	Width        any       `toml:"width"`
}

type fileMembership struct {
	FieldScale      *float64 `toml:"field_scale"`
	Concentration   *float64 `toml:"concentration"`
	ArmEndSoftening *float64 `toml:"arm_end_softening"`
}

type fileLikelihood struct {
	ErrorModel    *string            `toml:"error_model"`
	StudentDOF    *float64           `toml:"student_dof"`
	DistancePrior *string            `toml:"distance_prior"`
	Vertical      *string            `toml:"vertical"`
	DistanceRange []float64          `toml:"distance_range"`
	Tolerance     *float64           `toml:"tolerance"`
	InnerRadius   *float64           `toml:"inner_radius"`
	ExcludeInner  *bool              `toml:"exclude_inner"`
	BarDispersion *float64           `toml:"bar_dispersion"`
	BarSoftening  *float64           `toml:"bar_softening"`
	PilotStart    map[string]float64 `toml:"pilot_start"`
	PilotSpread   map[string]float64 `toml:"pilot_spread"`
}

type fileSampler struct {
	Walkers         *int64     `toml:"walkers"`
	Steps           *int64     `toml:"steps"`
	MaxSteps        *int64     `toml:"max_steps"`
	Burn            *int64     `toml:"burn"`
	Seed            *int64     `toml:"seed"`
	Threads         *int64     `toml:"threads"`
	CheckpointEvery *int64     `toml:"checkpoint_every"`
	Moves           *fileMoves `toml:"moves"`
	AdaptWeights    *bool      `toml:"adapt_weights"`
	MinESS          *float64   `toml:"min_ess"`
	StretchScale    *float64   `toml:"stretch_scale"`
}

type fileMoves struct {
	Stretch       *float64 `toml:"stretch"`
	DiffEvolution *float64 `toml:"differential_evolution"`
	Walk          *float64 `toml:"walk"`
	DiffSlice     *float64 `toml:"differential_slice"`
	GaussSlice    *float64 `toml:"gaussian_slice"`
	Independence  *float64 `toml:"independence"`
}

// Load reads and checks the configuration file at path. Relative paths in it
// are taken relative to the file's folder. A failure to read the file is
// returned as such; problems with its content as Errors.
func Load(path string) (*Config, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("reading configuration: %w", err)
	}
	return Parse(data, path, filepath.Dir(path))
}

// Parse reads and checks a configuration document. name is the file name used
// in messages (its base name without extension becomes Config.Name); baseDir
// is the folder that relative paths are taken relative to (the working folder
// when empty). Every problem found is returned at once, as Errors, each
// naming the setting and its line.
func Parse(data []byte, name, baseDir string) (*Config, error) {
	var doc fileConfig
	dec := toml.NewDecoder(bytes.NewReader(data))
	dec.DisallowUnknownFields()
	var unknown Errors
	if err := dec.Decode(&doc); err != nil {
		var strict *toml.StrictMissingError
		if !errors.As(err, &strict) {
			return nil, decodeProblems(err, data, name)
		}
		// Only unknown keys: the rest of the document is decoded, and checked below, so
		// that every problem is listed at once.
		if !errors.As(decodeProblems(err, data, name), &unknown) {
			return nil, err
		}
	}
	lines := locateKeys(data)

	base, err := filepath.Abs(baseDir)
	if err != nil {
		return nil, fmt.Errorf("configuration %s: resolving folder %q: %w", name, baseDir, err)
	}
	c := &Config{
		Name:    configName(name),
		File:    name,
		BaseDir: base,
	}
	var ps problems
	doc.fill(c, &ps)
	c.validate(&ps)
	err = ps.result(name, lines)
	if len(unknown) > 0 {
		var found Errors
		errors.As(err, &found)
		all := append(unknown, found...)
		sort.SliceStable(all, func(i, j int) bool { return all[i].Line < all[j].Line })
		return nil, all
	}
	if err != nil {
		return nil, err
	}
	return c, nil
}

// configName returns the base name of a file without its extension.
func configName(file string) string {
	if file == "" {
		return ""
	}
	base := filepath.Base(file)
	return strings.TrimSuffix(base, filepath.Ext(base))
}

// resolve makes a path absolute against the base folder.
func (c *Config) resolve(path string) string {
	if filepath.IsAbs(path) {
		return filepath.Clean(path)
	}
	return filepath.Join(c.BaseDir, path)
}

// fill converts the document into c, applying defaults.
func (d *fileConfig) fill(c *Config, ps *problems) {
	if d.Catalog == nil || *d.Catalog == "" {
		ps.addf("catalog", "missing: give the catalog file, for example catalog = \"sources.csv\"")
	} else {
		c.Catalog = c.resolve(*d.Catalog)
	}
	switch {
	case d.Output == nil:
		out := "run"
		if c.Name != "" {
			out = "run-" + c.Name
		}
		c.Output = c.resolve(out)
	case *d.Output == "":
		ps.addf("output", "empty run directory")
	default:
		c.Output = c.resolve(*d.Output)
	}

	r := d.Rotation
	if r == nil {
		r = &fileRotation{}
	}
	c.Rotation.Curve = model.CurveLinear
	if len(r.NodeRadii) > 0 {
		c.Rotation.Curve = model.CurveNodes // the likely intent, should the name be wrong
	}
	if r.Curve != nil {
		if v, ok := choose(ps, "rotation.curve", *r.Curve, model.CurveLinear, model.CurvePower, model.CurveNodes); ok {
			c.Rotation.Curve = v
		}
	}
	c.Rotation.CoreRadius = orFloat(r.CoreRadius, model.DefaultCoreRadius)
	if c.Rotation.Curve == model.CurveNodes {
		c.Rotation.NodeRadii = append([]float64(nil), r.NodeRadii...)
		c.Rotation.Interpolation = model.MonotoneCubic
		if r.Interpolation != nil {
			if v, ok := choose(ps, "rotation.interpolation", *r.Interpolation, model.MonotoneCubic, model.LinearInterp); ok {
				c.Rotation.Interpolation = v
			}
		}
	} else {
		if r.NodeRadii != nil {
			ps.addf("rotation.node_radii", "applies only to curve = \"nodes\" (the curve is %q)", c.Rotation.Curve)
		}
		if r.Interpolation != nil {
			ps.addf("rotation.interpolation", "applies only to curve = \"nodes\" (the curve is %q)", c.Rotation.Curve)
		}
	}

	// The parameters depend on the distance prior and the vertical structure.
	c.Likelihood.DistancePrior, c.Likelihood.Vertical = DistanceGalaxy, VerticalGaussian
	if l := d.Likelihood; l != nil && l.DistancePrior != nil {
		if v, ok := choose(ps, "likelihood.distance_prior", *l.DistancePrior, DistanceGalaxy, DistanceParallax); ok {
			c.Likelihood.DistancePrior = v
		}
	}
	if l := d.Likelihood; l != nil && l.Vertical != nil {
		if v, ok := choose(ps, "likelihood.vertical", *l.Vertical, VerticalGaussian, VerticalNone); ok {
			c.Likelihood.Vertical = v
		}
	}
	d.fillArms(c, ps)
	d.fillParams(c, ps)
	d.fillSelection(c, ps)

	m := d.Membership
	if m == nil {
		m = &fileMembership{}
	}
	c.Membership = Membership{
		FieldScale:      orFloat(m.FieldScale, DefaultFieldScale),
		Concentration:   orFloat(m.Concentration, DefaultConcentration),
		ArmEndSoftening: orFloat(m.ArmEndSoftening, DefaultArmEndSoftening),
	}

	l := d.Likelihood
	if l == nil {
		l = &fileLikelihood{}
	}
	c.Likelihood = Likelihood{
		Errors:        model.ErrorsGaussian,
		StudentDOF:    orFloat(l.StudentDOF, DefaultStudentDOF),
		DistancePrior: c.Likelihood.DistancePrior,
		Vertical:      c.Likelihood.Vertical,
		DistanceRange: [2]float64{DefaultDistanceMin, DefaultDistanceMax},
		Tolerance:     orFloat(l.Tolerance, DefaultTolerance),
		InnerRadius:   orFloat(l.InnerRadius, DefaultInnerRadius),
		BarDispersion: orFloat(l.BarDispersion, DefaultBarDispersion),
		BarSoftening:  orFloat(l.BarSoftening, DefaultBarSoftening),
		PilotStart:    copyMap(l.PilotStart),
		PilotSpread:   copyMap(l.PilotSpread),
	}
	if l.ErrorModel != nil {
		if v, ok := choose(ps, "likelihood.error_model", *l.ErrorModel, model.ErrorsGaussian, model.ErrorsTolerant, model.ErrorsStudent); ok {
			c.Likelihood.Errors = v
		}
	}
	if l.DistanceRange != nil {
		if len(l.DistanceRange) != 2 {
			ps.addf("likelihood.distance_range", "give two distances [d_min, d_max] in kpc, got %d", len(l.DistanceRange))
		} else {
			c.Likelihood.DistanceRange = [2]float64{l.DistanceRange[0], l.DistanceRange[1]}
		}
	}
	if l.ExcludeInner != nil {
		c.Likelihood.ExcludeInner = *l.ExcludeInner
	}

	s := d.Sampler
	if s == nil {
		s = &fileSampler{}
	}
	c.Sampler = Sampler{
		Steps:           orInt(ps, "sampler.steps", s.Steps, 0),
		MaxSteps:        orInt(ps, "sampler.max_steps", s.MaxSteps, DefaultMaxSteps),
		Threads:         orInt(ps, "sampler.threads", s.Threads, 0),
		CheckpointEvery: orInt(ps, "sampler.checkpoint_every", s.CheckpointEvery, DefaultCheckpointEvery),
		StretchScale:    orFloat(s.StretchScale, DefaultStretchScale),
		MinESS:          orFloat(s.MinESS, DefaultMinESS),
		AdaptWeights:    DefaultAdaptWeights,
		Moves:           DefaultMoves,
	}
	if s.AdaptWeights != nil {
		c.Sampler.AdaptWeights = *s.AdaptWeights
	}
	c.Sampler.Burn = orInt(ps, "sampler.burn", s.Burn, c.Sampler.Steps/4)
	c.Sampler.Walkers = orInt(ps, "sampler.walkers", s.Walkers, DefaultWalkers(c.Dim()))
	c.Sampler.Seed = DefaultSeed
	if s.Seed != nil {
		if *s.Seed < 0 {
			ps.addf("sampler.seed", "%d is negative", *s.Seed)
		} else {
			c.Sampler.Seed = uint64(*s.Seed)
		}
	}
	if mv := s.Moves; mv != nil {
		c.Sampler.Moves = Moves{
			Stretch:       orFloat(mv.Stretch, 0),
			DiffEvolution: orFloat(mv.DiffEvolution, 0),
			Walk:          orFloat(mv.Walk, 0),
			DiffSlice:     orFloat(mv.DiffSlice, 0),
			GaussSlice:    orFloat(mv.GaussSlice, 0),
			Independence:  orFloat(mv.Independence, 0),
		}
	}
}

// fillParams reads the priors of the global parameters and derived quantities.
func (d *fileConfig) fillParams(c *Config, ps *problems) {
	names := c.globalNames()
	given := map[string]bool{}
	for _, key := range sortedKeys(d.Params) {
		if !contains(names, key) {
			ps.addf("params."+key, "%s", c.unknownParam(key, names))
			continue
		}
		given[key] = true
	}
	for _, name := range names {
		p := DefaultPrior(name)
		if given[name] {
			if q, ok := readPrior(ps, "params."+name, d.Params[name]); ok {
				p = q
			}
		}
		c.Params = append(c.Params, Param{Name: name, Prior: p})
	}

	allowed := c.DerivedNames()
	for _, name := range allowed {
		v, ok := d.DerivedPriors[name]
		if !ok {
			continue
		}
		if q, ok := readPrior(ps, "derived_priors."+name, v); ok {
			c.DerivedPriors = append(c.DerivedPriors, Param{Name: name, Prior: q})
		}
	}
	for _, key := range sortedKeys(d.DerivedPriors) {
		if !contains(allowed, key) {
			msg := fmt.Sprintf("not a derived quantity that can take a prior%s; known: %s", didYouMean(key, allowed), strings.Join(allowed, ", "))
			if contains(names, key) {
				msg = fmt.Sprintf("%s is a parameter: give its prior under [params]", key)
			}
			ps.addf("derived_priors."+key, "%s", msg)
		}
	}
}

// globalNames returns the names of the global parameters of the configured
// model (model.GlobalNames).
func (c *Config) globalNames() []string {
	return model.GlobalNames(c.Rotation.Curve, len(c.Rotation.NodeRadii), c.HasLayer())
}

// HasLayer reports whether the model puts the sources in a layer about the
// plane, with parameters scale_height and z_sun: vertical = "gaussian" in the
// galaxy distance mode. In the parallax mode distances are flat and the
// vertical structure does not enter.
func (c *Config) HasLayer() bool {
	return c.Likelihood.Vertical == VerticalGaussian && c.Likelihood.DistancePrior == DistanceGalaxy
}

// fillSelection reads the [selection] table.
func (d *fileConfig) fillSelection(c *Config, ps *problems) {
	s := d.Selection
	if s == nil {
		return
	}
	if s.Declination != nil {
		if len(s.Declination) != 2 {
			ps.addf("selection.declination", "give two declinations [lower, upper] in degrees, got %d", len(s.Declination))
		} else {
			c.Selection.Declination = []float64{s.Declination[0], s.Declination[1]}
		}
	}
	for i, r := range s.ExcludeLongitude {
		if len(r) != 2 {
			ps.addf("selection.exclude_longitude", "range %d: give two longitudes [from, to] in degrees, got %d", i+1, len(r))
			continue
		}
		c.Selection.ExcludeLongitude = append(c.Selection.ExcludeLongitude, [2]float64{r[0], r[1]})
	}
	if cm := s.Completeness; cm != nil {
		switch {
		case cm.HalfDistance == nil:
			ps.addf("selection.completeness.half_distance", "missing: give the distance (kpc) at which the completeness falls to one half")
		case cm.Softness == nil:
			ps.addf("selection.completeness.softness", "missing: give the distance (kpc) over which the completeness falls")
		default:
			c.Selection.HalfDistance, c.Selection.Softness = *cm.HalfDistance, *cm.Softness
		}
	}
}

// unknownParam explains why a key under [params] is not a parameter.
func (c *Config) unknownParam(key string, names []string) string {
	if c.Rotation.Curve == model.CurveNodes {
		if key == param.Theta0 {
			return "with curve = \"nodes\", Theta0 is derived: give its prior under [derived_priors]"
		}
		if param.IsNodeName(key) {
			n := len(c.Rotation.NodeRadii)
			return fmt.Sprintf("the nodes curve has %d node radii, so speeds Theta_1 … Theta_%d", n, n)
		}
	}
	if info, ok := param.Lookup(key, nil); ok && info.Vertical && !c.HasLayer() {
		return fmt.Sprintf("%s is a parameter of the sources' layer: it applies only with likelihood.vertical = %q and distance_prior = %q", key, VerticalGaussian, DistanceGalaxy)
	}
	for _, curve := range []model.CurveFamily{model.CurveLinear, model.CurvePower, model.CurveNodes} {
		if curve != c.Rotation.Curve && contains(model.GlobalNames(curve, 100, true), key) {
			return fmt.Sprintf("%s belongs to another rotation curve than %q", key, c.Rotation.Curve)
		}
	}
	if info, ok := param.Lookup(key, c.armNames()); ok && info.Kind == param.Fraction {
		return "the membership fractions have a Dirichlet prior, set by membership.concentration"
	}
	for _, a := range c.Arms {
		if strings.HasPrefix(key, a.Name+"_") {
			return "arm parameters are set in the arm's [[arm]] table (radius, pitch, pitch2, kink, width)"
		}
	}
	return fmt.Sprintf("unknown parameter%s; the %s curve has %s", didYouMean(key, names), c.Rotation.Curve, strings.Join(names, ", "))
}

// fillArms reads the [[arm]] tables.
func (d *fileConfig) fillArms(c *Config, ps *problems) {
	for i, fa := range d.Arms {
		key := fmt.Sprintf("arm[%d]", i+1)
		a := Arm{}
		if fa.Name == nil {
			ps.addf(key+".name", "missing: every arm needs a name")
			a.Name = fmt.Sprintf("arm%d", i+1)
		} else {
			a.Name = *fa.Name
		}
		a.RefAzimuth = orFloat(fa.RefAzimuth, 0)
		switch {
		case fa.AzimuthRange == nil:
			ps.addf(key+".azimuth_range", "missing: give the azimuths [start, end] in degrees over which arm %q exists", a.Name)
		case len(fa.AzimuthRange) != 2:
			ps.addf(key+".azimuth_range", "give two azimuths [start, end] in degrees, got %d", len(fa.AzimuthRange))
		default:
			a.AzimuthRange = [2]float64{fa.AzimuthRange[0], fa.AzimuthRange[1]}
		}
		a.Radius = armPrior(ps, key, "radius", fa.Radius, nil)
		a.Pitch = armPrior(ps, key, "pitch", fa.Pitch, nil)
		a.Width = armPrior(ps, key, "width", fa.Width, DefaultWidth())
		switch {
		case fa.Kink != nil && fa.Pitch2 != nil:
			a.Kink = armPrior(ps, key, "kink", fa.Kink, nil)
			a.Pitch2 = armPrior(ps, key, "pitch2", fa.Pitch2, nil)
		case fa.Kink != nil:
			ps.addf(key+".kink", "a kinked arm needs both kink and pitch2; pitch2 is missing")
		case fa.Pitch2 != nil:
			ps.addf(key+".pitch2", "a kinked arm needs both kink and pitch2; kink is missing")
		}
		c.Arms = append(c.Arms, a)
	}
}

// armPrior reads one prior of an arm; a missing one without default is an
// error. A placeholder keeps later checks from tripping over a nil prior.
func armPrior(ps *problems, arm, field string, v any, def prior.Prior) prior.Prior {
	key := arm + "." + field
	if v == nil {
		if def == nil {
			ps.addf(key, "missing: every arm needs a prior for %s", field)
			return placeholder
		}
		return def
	}
	p, ok := readPrior(ps, key, v)
	if !ok {
		return placeholder
	}
	return p
}

// placeholder stands in for a prior that could not be read.
var placeholder prior.Prior = prior.Fixed{Value: 1}

// readPrior converts a prior expression (a string) or a number (fixed value).
func readPrior(ps *problems, key string, v any) (prior.Prior, bool) {
	switch x := v.(type) {
	case string:
		p, err := prior.Parse(x)
		if err != nil {
			ps.add(key, err, "%v", err)
			return nil, false
		}
		return p, true
	case float64:
		if !finite(x) {
			ps.addf(key, "fixed value %v is not a finite number", x)
			return nil, false
		}
		return prior.Fixed{Value: x}, true
	case int64:
		return prior.Fixed{Value: float64(x)}, true
	}
	ps.addf(key, "expected a prior expression such as \"uniform(5, 12)\", or a number for a fixed value; found %s", tomlKind(v))
	return nil, false
}

// choose checks that s is one of the allowed values.
func choose[T ~string](ps *problems, key, s string, allowed ...T) (T, bool) {
	for _, a := range allowed {
		if s == string(a) {
			return a, true
		}
	}
	quoted := make([]string, len(allowed))
	for i, a := range allowed {
		quoted[i] = fmt.Sprintf("%q", string(a))
	}
	known := make([]string, len(allowed))
	for i, a := range allowed {
		known[i] = string(a)
	}
	ps.addf(key, "%q is not one of %s%s", s, strings.Join(quoted, ", "), didYouMean(s, known))
	var zero T
	return zero, false
}

func orFloat(v *float64, def float64) float64 {
	if v == nil {
		return def
	}
	return *v
}

func orInt(ps *problems, key string, v *int64, def int) int {
	if v == nil {
		return def
	}
	if *v < 0 {
		ps.addf(key, "%d is negative", *v)
		return def
	}
	if *v > math.MaxInt32 {
		ps.addf(key, "%d is too large", *v)
		return def
	}
	return int(*v)
}

func copyMap(m map[string]float64) map[string]float64 {
	if len(m) == 0 {
		return nil
	}
	out := make(map[string]float64, len(m))
	for k, v := range m {
		out[k] = v
	}
	return out
}

func contains(list []string, s string) bool {
	for _, x := range list {
		if x == s {
			return true
		}
	}
	return false
}

func tomlKind(v any) string {
	switch v.(type) {
	case bool:
		return "true or false"
	case []any:
		return "a list"
	case map[string]any:
		return "a table"
	}
	return fmt.Sprintf("a value of type %T", v)
}

// decodeProblems turns a decoding error of go-toml into Errors with lines.
func decodeProblems(err error, data []byte, file string) error {
	var strict *toml.StrictMissingError
	var de *toml.DecodeError
	switch {
	case errors.As(err, &strict):
		lines := locateKeys(data)
		var ps problems
		for i := range strict.Errors {
			e := &strict.Errors[i]
			line, col := e.Position()
			key := qualifyKey(lines, e.Key(), line, col)
			ps.list = append(ps.list, &FieldError{Line: line, Key: key, Msg: "unknown setting" + suggest(key), Err: e})
		}
		return ps.result(file, nil)
	case errors.As(err, &de):
		line, col := de.Position()
		lines := locateKeys(data)
		key := qualifyKey(lines, de.Key(), line, col)
		var ps problems
		ps.list = append(ps.list, &FieldError{Line: line, Key: key, Msg: decodeMessage(de), Err: de})
		return ps.result(file, nil)
	}
	return fmt.Errorf("%s: %w", file, err)
}

// qualifyKey turns the position and key of an error reported by go-toml
// into a path. The key written at that position is preferred, since go-toml
// leaves out the keys of inline tables; otherwise a key reported without its
// table gets the table in force at the line, and [[arm]] entries get their
// index.
func qualifyKey(lines *keyLines, key toml.Key, line, col int) string {
	if path := lines.at(line, col); path != "" && len(key) > 0 {
		last := key[len(key)-1]
		if path == last || strings.HasSuffix(path, "."+last) || strings.Contains(path, "."+last+".") {
			return path // the key itself, or a key inside the inline table it holds
		}
	}
	if t := lines.tableAt(line); t != nil && !hasPrefix(key, t.parts) {
		return join(t.qualified, strings.Join(key, "."))
	}
	if len(key) > 0 && key[0] == "arm" {
		if n := lines.entry("arm", line); n > 0 {
			return strings.Join(append([]string{fmt.Sprintf("arm[%d]", n)}, key[1:]...), ".")
		}
	}
	return strings.Join(key, ".")
}

func hasPrefix(key toml.Key, parts []string) bool {
	if len(key) < len(parts) {
		return false
	}
	for i, p := range parts {
		if key[i] != p {
			return false
		}
	}
	return true
}

// suggest names the setting an unknown key was probably meant to be, or
// lists the settings of its table.
func suggest(key string) string {
	path := strings.Split(key, ".")
	for i, p := range path {
		if j := strings.IndexByte(p, '['); j >= 0 {
			path[i] = p[:j] // arm[2] → arm
		}
	}
	last, table := path[len(path)-1], path[:len(path)-1]
	if last == "errors" {
		return " (did you mean error_model?)"
	}
	if len(table) == 0 && last == "survey" {
		// A mock's description (mirabilis simulate) is a fit's configuration plus [survey].
		return ": [survey] describes a mock for \"mirabilis simulate\"; leave it out of a fit's configuration"
	}
	known := knownKeys(table)
	if s := didYouMean(last, known); s != "" {
		return s
	}
	if len(known) > 0 {
		where := "at the top level"
		switch t := strings.Join(table, "."); {
		case t == "arm":
			where = "in [[arm]]"
		case t != "":
			where = "in [" + t + "]"
		}
		return fmt.Sprintf("; known %s: %s", where, strings.Join(known, ", "))
	}
	return ""
}

// didYouMean returns " (did you mean NAME?)" for the known name nearest to word, or "" if
// none is near.
func didYouMean(word string, known []string) string {
	if s := spelling.Nearest(word, known); s != "" && s != word {
		return fmt.Sprintf(" (did you mean %s?)", s)
	}
	return ""
}

// knownKeys lists the keys the document accepts in the table at path (plain
// key parts, without array indices).
func knownKeys(path []string) []string {
	t := reflect.TypeOf(fileConfig{})
	for _, part := range path {
		f, ok := fieldByTag(t, part)
		if !ok {
			return nil
		}
		t = f.Type
		for t.Kind() == reflect.Pointer || t.Kind() == reflect.Slice {
			t = t.Elem()
		}
		if t.Kind() != reflect.Struct {
			return nil
		}
	}
	var keys []string
	for i := 0; i < t.NumField(); i++ {
		keys = append(keys, t.Field(i).Tag.Get("toml"))
	}
	return keys
}

func fieldByTag(t reflect.Type, tag string) (reflect.StructField, bool) {
	for i := 0; i < t.NumField(); i++ {
		if t.Field(i).Tag.Get("toml") == tag {
			return t.Field(i), true
		}
	}
	return reflect.StructField{}, false
}

var typeMismatch = regexp.MustCompile(`cannot decode TOML (\w+) into .* of type (.+)$`)

// decodeMessage rewrites go-toml's messages about Go types in the terms of the
// document.
func decodeMessage(de *toml.DecodeError) string {
	msg := strings.TrimPrefix(de.Error(), "toml: ")
	m := typeMismatch.FindStringSubmatch(msg)
	if m == nil {
		return msg
	}
	want := map[string]string{
		"int64":              "a whole number",
		"float64":            "a number",
		"string":             "a string",
		"bool":               "true or false",
		"[]float64":          "a list of numbers",
		"map[string]float64": "a table of numbers",
	}[m[2]]
	switch {
	case want != "":
	case strings.HasPrefix(m[2], "[]config."):
		want = "[[arm]] tables"
	case strings.HasPrefix(m[2], "map[") || strings.HasPrefix(m[2], "config.") || strings.HasPrefix(m[2], "struct"):
		want = "a table"
	default:
		return msg
	}
	return fmt.Sprintf("expected %s, found a TOML %s", want, m[1])
}
