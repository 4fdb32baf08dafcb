package mock

import (
	"strings"
	"testing"
)

// TestSurveyMessages checks that mistakes in the [survey] table are told in the terms of
// the file (key, line, what was expected), with the nearest setting suggested, and never in
// Go's type names.
// Settings the table no longer takes are refused with what to write instead.
func TestSurveyMessages(t *testing.T) {
	for _, c := range []struct{ table, want string }{
		{"\n[survey]\nsource = 10\n", "survey.source: unknown setting (did you mean sources?)"},
		{"\n[survey]\nwibble = 10\n", "survey.wibble: unknown setting; known in [survey]: sources, seed"},
		{"\n[survey]\nvelocity_error = \"small\"\n", "survey.velocity_error: expected a number, found a TOML string"},
		{"\n[survey]\nparallax_error = 0.01\n", "survey.parallax_error: expected a list of two numbers"},
		{"\n[survey]\nfractions = { fild = 0.1 }\n", `"fild" is neither "field" nor an arm of the model (did you mean field?)`},
		// The survey's earlier settings of its reach and thickness, refused with what to
		// write instead.
		{"\n[survey]\ndeclination_range = [-30, 90]\n", "survey.declination_range: no longer a survey setting: the sky a survey sees is the [selection] table's, which the fit reads too: write declination = [-30, 90] under [selection]"},
		{"\n[survey]\nmax_distance = 16\n", "survey.max_distance: no longer a survey setting: sources are drawn over the likelihood's distance range, distance_range = [d_min, d_max] under [likelihood]"},
		{"\n[survey]\nheight = 0.03 # kpc\n", `survey.height: no longer a survey setting: the sources' layer is the model's: write scale_height = "fixed(0.03)" under [params]`},
	} {
		_, err := Parse(testGalaxy(t, c.table), "galaxy.toml", t.TempDir())
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "galaxy.toml:") ||
			strings.Contains(err.Error(), "mock.Survey") || strings.Contains(err.Error(), "float64") {
			t.Errorf("%q: %v", c.table, err)
		}
	}
}
