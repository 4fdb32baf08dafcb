package mock

import (
	"strings"
	"testing"
)

// TestSurveyMessages checks that mistakes in the [survey] table are told in the terms of
// the file (key, line, what was expected), with the nearest setting suggested, and never in
// Go's type names.
func TestSurveyMessages(t *testing.T) {
	for _, c := range []struct{ table, want string }{
		{"\n[survey]\nsource = 10\n", "survey.source: unknown setting (did you mean sources?)"},
		{"\n[survey]\nwibble = 10\n", "survey.wibble: unknown setting; known in [survey]: sources, seed"},
		{"\n[survey]\nheight = \"thin\"\n", "survey.height: expected a number, found a TOML string"},
		{"\n[survey]\nparallax_error = 0.01\n", "survey.parallax_error: expected a list of two numbers"},
		{"\n[survey]\nfractions = { fild = 0.1 }\n", `"fild" is neither "field" nor an arm of the model (did you mean field?)`},
	} {
		_, err := Parse(testGalaxy(t, c.table), "galaxy.toml", t.TempDir())
		if err == nil || !strings.Contains(err.Error(), c.want) || !strings.Contains(err.Error(), "galaxy.toml:") ||
			strings.Contains(err.Error(), "mock.Survey") || strings.Contains(err.Error(), "float64") {
			t.Errorf("%q: %v", c.table, err)
		}
	}
}
