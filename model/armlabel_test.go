package model

import (
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model/catalog"
)

// TestArmLabelsIgnoreCase checks that catalog arm labels match the model's arm names
// without regard to case, as catalog column names do, and that a misspelt label names the
// nearest arm.
func TestArmLabelsIgnoreCase(t *testing.T) {
	spec := testSpec(t, ErrorsGaussian)
	read := func(arm string) (*catalog.Catalog, error) {
		return catalog.Read(strings.NewReader("name,l,b,parallax,parallax_err,arm\ns1,30,0,0.2,0.02,"+arm+"\n"), "c.csv")
	}
	for arm, want := range map[string]int{"Lantern": 2, "lantern": 2, "CORVID": 1, "?": 0, "": 0} {
		cat, err := read(arm)
		if err != nil {
			t.Fatal(err)
		}
		src, err := NewSources(cat, spec)
		if err != nil {
			t.Errorf("label %q: %v", arm, err)
			continue
		}
		if src[0].Label != want {
			t.Errorf("label %q: component %d, want %d", arm, src[0].Label, want)
		}
	}
	cat, err := read("Lanten")
	if err != nil {
		t.Fatal(err)
	}
	if _, err := NewSources(cat, spec); err == nil || !strings.Contains(err.Error(), `c.csv:2: source s1: arm "Lanten" is not an arm of the model (did you mean Lantern?)`) {
		t.Errorf("misspelt label: %v", err)
	}
}

// TestUnknownParameterSuggestion checks that a misspelt parameter name in a parameter set
// gets the nearest global name suggested.
func TestUnknownParameterSuggestion(t *testing.T) {
	values := map[string]float64{"R0": 8.25, "Theta0": 232, "dTheta_dR": -0.6, "Usun": 10.5, "Vsun": 12.5, "Wsun": 7.5,
		"Us": 2, "Vs": -3, "Ws": 0, "sigma_vr": 6}
	_, _, err := MotionFromParams(values, CurveSettings{RCore: DefaultCoreRadius})
	if err == nil || !strings.Contains(err.Error(), `unknown parameter "sigma_vr" (did you mean sigma_vir?)`) {
		t.Errorf("got %v", err)
	}
}
