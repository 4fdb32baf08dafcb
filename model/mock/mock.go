// Package mock draws mock catalogs from the model with known parameters: sources along each
// spiral arm and in the field disk, in the layer about the mid-plane, moving with the model's
// rotation and peculiar motions plus their intrinsic scatter, seen through the survey's
// selection, with measurement errors that grow with distance.
//
// The places of the sources follow exactly the spatial density of the likelihood (MODEL.md
// §4, §5, §9): the Galaxy's fractions, each arm's density with its softened ends and its
// width at the source's radius, the layer N(z; 0, H) of the parameters scale_height and z_sun
// with z = d sin b + z⊙, the distance range [d_min, d_max] of [likelihood] distance_range, and
// the selection S(l, b, d) of the [selection] table. One description thus serves the mock and
// its fit.
//
// A mock is described by a run configuration (see package config) whose parameter priors
// give the true values (each prior's median; write them as fixed values), with one more
// table, [survey]:
//
//	[survey]
//	sources = 150                  # number of sources drawn
//	seed = 7                       # seed of the draws
//	fractions = { field = 0.15, Corvid = 0.25 }  # the Galaxy's fractions; arms not named share the rest equally
//	parallax_error = [0.008, 0.004]   # mas: σϖ = a + b·d (d in kpc)
//	proper_motion_error = [0.03, 0.02] # mas/yr: σμ = a + b·d
//	velocity_error = 3             # km/s
//	labelled = 0.1                 # share of arm sources whose arm is written in the catalog
//	galactic_share = 0.0           # share of sources whose position and proper motion are written in (l, b)
//	missing_share = 0.05           # share of sources with one kinematic term left blank
//
// The survey's earlier settings of its reach and thickness (declination_range, max_distance,
// min_distance, height) are refused, with what to write instead: the reach is the
// [selection] table and the distance range, the thickness the parameter scale_height.
package mock

import (
	"bytes"
	"errors"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"reflect"
	"regexp"
	"strconv"
	"strings"

	toml "github.com/pelletier/go-toml/v2"

	"github.com/mirabilis-astro/mirabilis/internal/spelling"
	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

// Survey describes the mock survey: how many sources, in what shares, how well it measures.
// Where it can see is the configuration's [selection] table and distance range.
type Survey struct {
	Sources          int                `toml:"sources"`
	Seed             uint64             `toml:"seed"`
	Fractions        map[string]float64 `toml:"fractions"`
	ParallaxError    [2]float64         `toml:"parallax_error"`
	ProperMotionErr  [2]float64         `toml:"proper_motion_error"`
	VelocityError    float64            `toml:"velocity_error"`
	Labelled         float64            `toml:"labelled"`
	GalacticShare    float64            `toml:"galactic_share"`
	MissingShare     float64            `toml:"missing_share"`
	fractionsOrdered []float64
}

// DefaultSurvey returns the survey settings used for keys the [survey] table leaves out.
func DefaultSurvey() Survey {
	return Survey{
		Sources: 150, Seed: 1, ParallaxError: [2]float64{0.008, 0.004}, ProperMotionErr: [2]float64{0.03, 0.02},
		VelocityError: 3, Labelled: 0.1, MissingShare: 0.05,
	}
}

// Model is a mock's configuration: the model with its true parameter values and the survey.
type Model struct {
	Config *config.Config
	Survey Survey
	// Truth holds the true value of every parameter, fractions included, by name.
	Truth map[string]float64
}

var surveyHeader = regexp.MustCompile(`^\s*\[\s*survey\s*\]\s*(#.*)?$`)
var tableHeader = regexp.MustCompile(`^\s*\[`)

// Load reads a mock description: a run configuration with a [survey] table. The catalog
// key of the configuration names the file the mock catalog is meant for; it need not exist.
func Load(path string) (*Model, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("reading mock description: %w", err)
	}
	return Parse(data, path, filepath.Dir(path))
}

// Parse reads a mock description from data; name is used in messages and baseDir resolves
// relative paths.
func Parse(data []byte, name, baseDir string) (*Model, error) {
	// Split off the [survey] table, keeping line numbers for the configuration's messages.
	lines := strings.Split(string(data), "\n")
	var survey, rest []string
	in := false
	for _, l := range lines {
		switch {
		case surveyHeader.MatchString(l):
			in = true
		case in && tableHeader.MatchString(l):
			in = false
		}
		if in {
			survey = append(survey, l)
			rest = append(rest, "")
		} else {
			survey = append(survey, "")
			rest = append(rest, l)
		}
	}
	s := DefaultSurvey()
	dec := toml.NewDecoder(bytes.NewReader([]byte(strings.Join(survey, "\n"))))
	dec.DisallowUnknownFields()
	var wrap struct {
		Survey *Survey `toml:"survey"`
	}
	wrap.Survey = &s
	if err := dec.Decode(&wrap); err != nil {
		var de *toml.DecodeError
		var sm *toml.StrictMissingError
		switch {
		case asError(err, &sm):
			var lines []string
			for i := range sm.Errors {
				e := &sm.Errors[i]
				row, _ := e.Position()
				key := e.Key()[len(e.Key())-1]
				msg := fmt.Sprintf("%s:%d: survey.%s: unknown setting", name, row, key)
				if instead := retired(key, survey, row); instead != "" {
					msg = fmt.Sprintf("%s:%d: survey.%s: no longer a survey setting: %s", name, row, key, instead)
				} else if s := spelling.Nearest(key, surveyKeys()); s != "" {
					msg += fmt.Sprintf(" (did you mean %s?)", s)
				} else {
					msg += "; known in [survey]: " + strings.Join(surveyKeys(), ", ")
				}
				lines = append(lines, msg)
			}
			return nil, errors.New(strings.Join(lines, "\n"))
		case asError(err, &de):
			row, _ := de.Position()
			key := "survey"
			if k := de.Key(); len(k) > 0 {
				key = "survey." + k[len(k)-1]
			}
			return nil, fmt.Errorf("%s:%d: %s: %s", name, row, key, surveyTypeMessage(de))
		}
		return nil, fmt.Errorf("%s: [survey]: %w", name, err)
	}
	cfg, err := parseConfigAllowingMissingCatalog([]byte(strings.Join(rest, "\n")), name, baseDir)
	if err != nil {
		return nil, err
	}
	m := &Model{Config: cfg, Survey: s, Truth: map[string]float64{}}
	for i, n := range cfg.ParamNames() {
		m.Truth[n] = cfg.Priors()[i].Quantile(0.5)
	}
	if err := m.checkSurvey(name); err != nil {
		return nil, err
	}
	return m, nil
}

// retired says what to write instead of a setting the [survey] table no longer takes, or ""
// for a key it never took: the survey's reach and the layer's thickness are the model's, so
// that the mock and its fit read them from one description. lines are the description's
// lines and row the setting's line (1-based), whose value is carried over where it can be.
func retired(key string, lines []string, row int) string {
	value := ""
	if row >= 1 && row <= len(lines) {
		if _, v, ok := strings.Cut(lines[row-1], "="); ok {
			value, _, _ = strings.Cut(v, "#")
			value = strings.TrimSpace(value)
		}
	}
	if value == "" {
		value = "…"
	}
	switch key {
	case "declination_range":
		return fmt.Sprintf("the sky a survey sees is the [selection] table's, which the fit reads too: write declination = %s under [selection] (deg, ICRS)", value)
	case "max_distance", "min_distance":
		return "sources are drawn over the likelihood's distance range, distance_range = [d_min, d_max] under [likelihood] (kpc); " +
			"a survey that finds distant sources less often has completeness = { half_distance = …, softness = … } under [selection] (kpc)"
	case "height":
		return fmt.Sprintf("the sources' layer is the model's: write scale_height = \"fixed(%s)\" under [params] (kpc), and z_sun for the Sun's height above the mid-plane", value)
	}
	return ""
}

// surveyKeys lists the settings of the [survey] table.
func surveyKeys() []string {
	t := reflect.TypeOf(Survey{})
	keys := make([]string, 0, t.NumField())
	for i := range t.NumField() {
		if k := t.Field(i).Tag.Get("toml"); k != "" {
			keys = append(keys, k)
		}
	}
	return keys
}

var surveyTypeMismatch = regexp.MustCompile(`cannot decode TOML (\w+) into .* of type (.+)$`)

// surveyTypeMessage says what a [survey] setting should have been, in the terms of the
// document rather than of Go's types.
func surveyTypeMessage(de *toml.DecodeError) string {
	msg := strings.TrimPrefix(de.Error(), "toml: ")
	m := surveyTypeMismatch.FindStringSubmatch(msg)
	if m == nil {
		return msg
	}
	want, ok := map[string]string{
		"float64":            "a number",
		"int":                "a whole number",
		"uint64":             "a non-negative whole number",
		"[2]float64":         "a list of two numbers",
		"map[string]float64": "a table of numbers",
	}[m[2]]
	if !ok {
		return msg
	}
	return fmt.Sprintf("expected %s, found a TOML %s", want, m[1])
}

// parseConfigAllowingMissingCatalog parses a configuration whose catalog may not exist yet
// (the mock is about to write it).
func parseConfigAllowingMissingCatalog(data []byte, name, baseDir string) (*config.Config, error) {
	cfg, err := config.Parse(data, name, baseDir)
	if err == nil {
		return cfg, nil
	}
	var errs config.Errors
	if !asError(err, &errs) {
		return nil, err
	}
	var keep config.Errors
	for _, e := range errs {
		if e.Key != "catalog" {
			keep = append(keep, e)
		}
	}
	if len(keep) > 0 {
		return nil, keep
	}
	// Only the catalog was missing: parse again against a placeholder that exists.
	tmp, terr := os.CreateTemp("", "mirabilis-mock-*.csv")
	if terr != nil {
		return nil, terr
	}
	tmp.Close()
	defer os.Remove(tmp.Name())
	re := regexp.MustCompile(`(?m)^(\s*catalog\s*=\s*)(".*?"|'.*?')`)
	var orig string
	patched := re.ReplaceAllStringFunc(string(data), func(s string) string {
		sub := re.FindStringSubmatch(s)
		orig = sub[2]
		return sub[1] + strconv.Quote(tmp.Name())
	})
	cfg, err = config.Parse([]byte(patched), name, baseDir)
	if err != nil {
		return nil, err
	}
	if unq, uerr := strconv.Unquote(orig); uerr == nil {
		orig = unq
	} else {
		orig = strings.Trim(orig, "'")
	}
	if !filepath.IsAbs(orig) {
		orig = filepath.Join(cfg.BaseDir, orig)
	}
	cfg.Catalog = orig
	return cfg, nil
}

func (m *Model) checkSurvey(name string) error {
	s := &m.Survey
	bad := func(key, format string, a ...any) error {
		return fmt.Errorf("%s: [survey] %s: %s", name, key, fmt.Sprintf(format, a...))
	}
	switch {
	case s.Sources < 1:
		return bad("sources", "%d: want at least one source", s.Sources)
	case !(s.ParallaxError[0] > 0 && s.ParallaxError[1] >= 0):
		return bad("parallax_error", "%v: want a > 0, b ≥ 0", s.ParallaxError)
	case !(s.ProperMotionErr[0] > 0 && s.ProperMotionErr[1] >= 0):
		return bad("proper_motion_error", "%v: want a > 0, b ≥ 0", s.ProperMotionErr)
	case !(s.VelocityError > 0):
		return bad("velocity_error", "%g: want a positive number", s.VelocityError)
	}
	for _, share := range []struct {
		key string
		v   float64
	}{{"labelled", s.Labelled}, {"galactic_share", s.GalacticShare}, {"missing_share", s.MissingShare}} {
		if !(share.v >= 0 && share.v <= 1) {
			return bad(share.key, "%g: want a share between 0 and 1", share.v)
		}
	}
	arms := m.Config.Arms
	known := map[string]bool{param.FieldComponent: true}
	names := []string{param.FieldComponent}
	for _, a := range arms {
		known[a.Name] = true
		names = append(names, a.Name)
	}
	var given float64
	for k, v := range s.Fractions {
		if !known[k] {
			hint := ""
			if n := spelling.Nearest(k, names); n != "" {
				hint = fmt.Sprintf(" (did you mean %s?)", n)
			}
			return bad("fractions", "%q is neither \"field\" nor an arm of the model%s", k, hint)
		}
		if !(v >= 0) {
			return bad("fractions", "%s = %g must not be negative", k, v)
		}
		given += v
	}
	if given > 1+1e-9 {
		return bad("fractions", "shares add up to %g, more than 1", given)
	}
	n := 1 + len(arms)
	unnamed := 0
	for _, nm := range names {
		if _, ok := s.Fractions[nm]; !ok {
			unnamed++
		}
	}
	s.fractionsOrdered = make([]float64, n)
	for i, nm := range names {
		if v, ok := s.Fractions[nm]; ok {
			s.fractionsOrdered[i] = v
		} else if unnamed > 0 {
			s.fractionsOrdered[i] = (1 - given) / float64(unnamed)
		}
	}
	var sum float64
	for _, v := range s.fractionsOrdered {
		sum += v
	}
	if !(sum > 0) {
		return bad("fractions", "every share is zero")
	}
	for i, nm := range names {
		s.fractionsOrdered[i] /= sum
		m.Truth[param.FractionName(nm)] = s.fractionsOrdered[i]
	}
	return nil
}

// Truth is what the mock knows of one source and the catalog does not say.
type Truth struct {
	Name      string
	Component string // "field" or the arm's name
	Distance  float64
	R, Beta   float64 // kpc, deg; on an arm Beta is the arm's own azimuth, unwrapped
	Z         float64 // kpc above the mid-plane
}

// Draw draws the mock catalog from spec, the fixed part of the model that m.Config
// describes (package fit makes it: fit.SpecFromConfig), at the true parameters. seed, when
// not nil, replaces the survey's seed. The same description and seed give the same catalog.
//
// The sources' places follow the likelihood's spatial density (see the package comment):
// each is drawn from the whole Galaxy with its component's fraction and kept only where the
// survey sees it, so the fractions are the Galaxy's and the catalog's shares differ from
// them as the selection favours one component over another.
func (m *Model) Draw(spec *model.Spec, seed *uint64) ([]catalog.Source, []Truth, error) {
	s := m.Survey
	if seed != nil {
		s.Seed = *seed
	}
	if spec.NumComponents() != 1+len(m.Config.Arms) {
		return nil, nil, fmt.Errorf("mock: the model has %d arms, the description %d", len(spec.Arms), len(m.Config.Arms))
	}
	p, err := spec.NewParams(m.Truth)
	if err != nil {
		return nil, nil, fmt.Errorf("true parameters: %w", err)
	}
	rng := rand.New(rand.NewPCG(s.Seed, 0x6d6f636b))
	pl, err := newPlacer(spec, p, s.fractionsOrdered)
	if err != nil {
		return nil, nil, err
	}
	var out []catalog.Source
	var truth []Truth
	for tries := 0; len(out) < s.Sources; tries++ {
		if tries > 10000*s.Sources {
			return nil, nil, fmt.Errorf("the survey's selection accepts too few sources (%d after %d draws): widen the [selection] or the distance range", len(out), tries)
		}
		pc, ok, err := pl.draw(rng)
		if err != nil {
			return nil, nil, err
		}
		if !ok {
			continue
		}
		d, R, z := pc.d, pc.R, pc.z
		l, b := pc.l/deg, pc.b/deg
		ra, decl := model.GalacticToICRS(l, b)
		comp := pc.comp
		beta := pc.beta
		sl := model.NewSightline(l, b)
		// True velocity: the model's mean motion plus the intrinsic scatter σ(R) in each
		// of û, v̂, ẑ at the source.
		pr := p.Motion.Predict(&sl, d)
		sig := math.Sqrt(spec.Bar.Variance(pr.R, p.SigmaVir))
		du, dv, dw := sig*rng.NormFloat64(), sig*rng.NormFloat64(), sig*rng.NormFloat64()
		cb, sb := pr.CosBeta, pr.SinBeta
		ex := du*cb + dv*sb // û = (cos β, −sin β, 0), v̂ = (sin β, cos β, 0)
		ey := -du*sb + dv*cb
		h := ex*sl.CosL + ey*sl.SinL
		vl := ey*sl.CosL - ex*sl.SinL
		vr := h*sl.CosB + dw*sl.SinB
		vb := dw*sl.CosB - h*sl.SinB
		kd := model.KmsPerKpcMasYr * d
		muL, muB := pr.MuLStar+vl/kd, pr.MuB+vb/kd
		vLSR := pr.VLSR + vr

		i := len(out) + 1
		src := catalog.Source{Name: fmt.Sprintf("mock-%04d", i)}
		galactic := rng.Float64() < s.GalacticShare
		sp := s.ParallaxError[0] + s.ParallaxError[1]*d
		src.Parallax = catalog.Measurement{Value: round(1/d+sp*rng.NormFloat64(), 5), Err: round(sp, 5), OK: true}
		sm := s.ProperMotionErr[0] + s.ProperMotionErr[1]*d
		m1, m2 := muL, muB
		if galactic {
			src.Frame, src.Lon, src.Lat, src.PMFrame = catalog.Galactic, round(l, 6), round(b, 6), catalog.Galactic
		} else {
			src.Frame, src.Lon, src.Lat = catalog.Equatorial, round(ra, 6), round(decl, 6)
			m1, m2 = sl.PMToEquatorial(muL, muB)
		}
		// Positions are written to 1e-6 deg; rebuild the sightline from what is written so
		// that the catalog is self-consistent.
		src.PM1 = catalog.Measurement{Value: round(m1+sm*rng.NormFloat64(), 4), Err: round(sm, 4), OK: true}
		src.PM2 = catalog.Measurement{Value: round(m2+sm*rng.NormFloat64(), 4), Err: round(sm, 4), OK: true}
		src.VelLSR = true
		src.Vel = catalog.Measurement{Value: round(vLSR+s.VelocityError*rng.NormFloat64(), 2), Err: s.VelocityError, OK: true}
		if rng.Float64() < s.MissingShare {
			switch rng.IntN(3) {
			case 0:
				src.Vel, src.VelLSR = catalog.Measurement{}, false
			case 1:
				src.PM1 = catalog.Measurement{}
			default:
				src.PM2 = catalog.Measurement{}
			}
		}
		name := "field"
		if comp > 0 {
			name = spec.Arms[comp-1].Name
			if rng.Float64() < s.Labelled {
				src.Arm = name
			}
		}
		out = append(out, src)
		truth = append(truth, Truth{Name: src.Name, Component: name, Distance: d, R: R, Beta: beta / deg, Z: z})
	}
	return out, truth, nil
}

const deg = math.Pi / 180

func round(x float64, digits int) float64 {
	p := math.Pow(10, float64(digits))
	return math.Round(x*p) / p
}

// Render draws the mock from spec (see Draw) and returns the catalog as CSV with the true
// values.
func (m *Model) Render(spec *model.Spec, seed *uint64) ([]byte, []Truth, error) {
	sources, truth, err := m.Draw(spec, seed)
	if err != nil {
		return nil, nil, err
	}
	var cat bytes.Buffer
	if err := catalog.Write(&cat, sources); err != nil {
		return nil, nil, err
	}
	return cat.Bytes(), truth, nil
}

// WriteTruth writes the true values of the sources as CSV: name, component, distance (kpc),
// R (kpc), beta (deg), z (kpc above the mid-plane). Comment lines starting with '#' come
// first, one per component: its fraction in the Galaxy (the true value of its f_ parameter)
// and its share of the catalog, which the survey's selection makes differ from it.
func (m *Model) WriteTruth(w *bytes.Buffer, truth []Truth) {
	count := map[string]int{}
	for _, t := range truth {
		count[t.Component]++
	}
	names := []string{param.FieldComponent}
	for _, a := range m.Config.Arms {
		names = append(names, a.Name)
	}
	w.WriteString("# component: fraction in the Galaxy (true f_), share of this catalog\n")
	for _, n := range names {
		share := 0.0
		if len(truth) > 0 {
			share = float64(count[n]) / float64(len(truth))
		}
		fmt.Fprintf(w, "# %s: galaxy %.4f, catalog %.4f (%d of %d)\n", n, m.Truth[param.FractionName(n)], share, count[n], len(truth))
	}
	w.WriteString("name,component,distance,R,beta,z\n")
	for _, t := range truth {
		fmt.Fprintf(w, "%s,%s,%.6f,%.6f,%.4f,%.5f\n", t.Name, t.Component, t.Distance, t.R, t.Beta, t.Z)
	}
}

func asError[T any](err error, target *T) bool {
	for err != nil {
		if t, ok := err.(T); ok {
			*target = t
			return true
		}
		u, ok := err.(interface{ Unwrap() error })
		if !ok {
			return false
		}
		err = u.Unwrap()
	}
	return false
}
