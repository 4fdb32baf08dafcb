package config

import (
	"errors"
	"reflect"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/param"
	"github.com/mirabilis-astro/mirabilis/model/prior"
)

// TestSelectionAndLayer reads the layer's parameters and the [selection] table.
func TestSelectionAndLayer(t *testing.T) {
	c := load(t, "selection.toml")
	want := Selection{Declination: []float64{-35, 90}, ExcludeLongitude: [][2]float64{{350, 10}, {100, 120.5}}, HalfDistance: 12, Softness: 1.5}
	if !reflect.DeepEqual(c.Selection, want) || !c.Selection.Active() {
		t.Errorf("selection %+v, want %+v", c.Selection, want)
	}
	if p, _ := c.Param(param.ScaleHeight); p != (prior.LogUniform{Min: 0.01, Max: 0.2}) {
		t.Errorf("scale_height prior %v", p)
	}
	if p, _ := c.Param(param.ZSun); p != (prior.Normal{Mu: 0.02, Sigma: 0.005}) {
		t.Errorf("z_sun prior %v", p)
	}
	// vertical = "none": no layer, no height parameters.
	none := parseDoc(t, minimalDoc+"\n[likelihood]\nvertical = \"none\"\n")
	if none.HasLayer() {
		t.Error("vertical = none has a layer")
	}
	for _, n := range none.ParamNames() {
		if n == param.ScaleHeight || n == param.ZSun {
			t.Errorf("vertical = none has parameter %s", n)
		}
	}
	if got := load(t, "rotation_only.toml"); got.HasLayer() {
		t.Error("the parallax mode has a layer")
	}
}

const minimalDoc = `catalog = "sources.csv"
[[arm]]
name = "Vireo"
azimuth_range = [0, 180]
radius = "uniform(6, 8)"
pitch = "uniform(5, 20)"
`

func parseDoc(t *testing.T, doc string) *Config {
	t.Helper()
	c, err := Parse([]byte(doc), "doc.toml", testdata+"/good")
	if err != nil {
		t.Fatalf("%v\n%s", err, doc)
	}
	return c
}

// TestSelectionErrors checks that each mistake in the new settings is reported with the
// file, the line of the setting, the value and what was expected.
func TestSelectionErrors(t *testing.T) {
	for _, c := range []struct {
		extra string
		line  int
		want  []string
	}{
		{"[likelihood]\nvertical = \"gausian\"\n", 9, []string{"likelihood.vertical", `"gausian"`, "did you mean gaussian"}},
		{"[selection]\ndeclination = [40, -30]\n", 9, []string{"selection.declination", "[40 -30]", "-90 ≤ lower < upper ≤ 90"}},
		{"[selection]\ndeclination = [-30]\n", 9, []string{"selection.declination", "two declinations", "got 1"}},
		{"[selection]\nexclude_longitude = [[350, 10], [20, 400]]\n", 9, []string{"selection.exclude_longitude", "range 2", "[20, 400]", "[0, 360]"}},
		{"[selection]\ncompleteness = { half_distance = 12.0, softness = -1 }\n", 9, []string{"selection.completeness.softness", "-1 kpc", "must be positive"}},
		{"[selection]\ncompleteness = { half_distance = 12.0 }\n", 9, []string{"selection.completeness.softness", "missing"}},
		{"[selection]\ncompleteness = { half_distance = 12.0, sofness = 1 }\n", 9, []string{"selection.completeness.sofness", "did you mean softness"}},
		{"[selection]\ndeclinaton = [-30, 90]\n", 9, []string{"selection.declinaton", "did you mean declination"}},
		{"[likelihood]\ndistance_prior = \"parallax\"\n[selection]\ndeclination = [-30, 90]\n", 10, []string{"selection", "distance_prior = \"galaxy\""}},
		{"[likelihood]\nvertical = \"none\"\n[params]\nscale_height = 0.05\n", 11, []string{"params.scale_height", "vertical = \"gaussian\""}},
	} {
		doc := minimalDoc + "\n" + c.extra
		_, err := Parse([]byte(doc), "doc.toml", testdata+"/good")
		var es Errors
		if !errors.As(err, &es) {
			t.Errorf("%q: error %v, want Errors", c.extra, err)
			continue
		}
		msg := es.Error()
		found := false
		for _, e := range es {
			if e.File == "doc.toml" && e.Line == c.line {
				found = true
			}
		}
		if !found {
			t.Errorf("%q: no error at doc.toml:%d: %s", c.extra, c.line, msg)
		}
		for _, w := range c.want {
			if !strings.Contains(msg, w) {
				t.Errorf("%q: %q lacks %q", c.extra, msg, w)
			}
		}
	}
}
