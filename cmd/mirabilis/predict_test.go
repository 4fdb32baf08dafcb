package main

import (
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/param"
)

// TestHelpParamsIsTheTable checks that "help params" lists every row of the parameter
// table with its unit and kind.
func TestHelpParamsIsTheTable(t *testing.T) {
	code, out, _ := runCLI(t, "help", "params")
	if code != 0 {
		t.Fatalf("help params: exit %d", code)
	}
	for _, e := range param.Table() {
		found := false
		for _, line := range strings.Split(out, "\n") {
			f := strings.Fields(line)
			if len(f) >= 2 && f[0] == e.Name && strings.Contains(line, " "+e.Kind.String()+" ") &&
				(e.Unit == "" || f[1] == e.Unit) {
				found = true
			}
		}
		if !found {
			t.Errorf("help params does not list %s (%s, %s)", e.Name, e.Unit, e.Kind)
		}
	}
}
