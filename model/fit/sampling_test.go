package fit

import (
	"encoding/json"
	"math"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/mcmc"
	"github.com/mirabilis-astro/mirabilis/model"
)

// The cost of the effective samples follows from the sampler's counts: after 100 tuning
// steps that cost 1000 evaluations, 300 more steps cost 6000 (20 per step); with burn-in
// at step 200 the summarised 200 steps cost 4000 evaluations, so an ESS of 80 is 0.02 per
// evaluation, and over 5 s of sampling for 7000 evaluations it is 80/(5·4000/7000) per
// second; τ of 12 steps is 240 evaluations. summary.json carries the numbers at its top
// level. Reference: the definitions in the Sampling documentation (arithmetic by hand).
func TestSamplingCost(t *testing.T) {
	res := &mcmc.Result{Evaluations: 7000, TunedEvaluations: 1000, TuneSteps: 100, Seconds: 5,
		Moves: []string{"a", "b"}, Weights: []float64{0.25, 0.75}, Widths: []float64{0, 0.5}}
	s := &Summary{Steps: 400}
	s.Sampling.fill(res, 400, 200, 12, []Quantity{{Name: "x", ESS: 95}, {Name: "y", ESS: 80}, {Name: "z", ESS: math.NaN()}})
	for _, c := range []struct {
		name      string
		got, want float64
	}{
		{"evaluations per step", s.EvaluationsPerStep, 20},
		{"τ in evaluations", s.MaxTauEvaluations, 240},
		{"slowest ESS", s.SlowestESS, 80},
		{"ESS per evaluation", s.ESSPerEvaluation, 0.02},
		{"ESS per second", s.ESSPerSecond, 80 / (5 * 4000.0 / 7000)},
	} {
		if !(math.Abs(c.got-c.want) <= 1e-12*c.want) {
			t.Errorf("%s = %v, want %v", c.name, c.got, c.want)
		}
	}
	var back map[string]any
	data, err := JSONIndent(s)
	if err != nil {
		t.Fatal(err)
	}
	if err := json.Unmarshal(data, &back); err != nil {
		t.Fatal(err)
	}
	if back["evaluations"] != 7000.0 || back["ess_per_evaluation"] != 0.02 || back["ess_per_second"] == nil {
		t.Errorf("summary.json: evaluations %v, ess_per_evaluation %v, ess_per_second %v", back["evaluations"], back["ess_per_evaluation"], back["ess_per_second"])
	}
	if moves, ok := back["moves"].([]any); !ok || len(moves) != 2 {
		t.Errorf("summary.json moves: %v", back["moves"])
	}
}

// TestFractionsOf checks that the summary says what the membership fractions describe: the
// Galaxy's when the model has a selection (MODEL.md §9: the mixture is over the Galaxy's
// fractions), the catalog's without one, in the text and in summary.json.
func TestFractionsOf(t *testing.T) {
	for _, c := range []struct {
		spec model.Spec
		want string
		text string
	}{
		{model.Spec{Galaxy: true}, FractionsOfCatalog, "are the catalog's shares"},
		{model.Spec{Galaxy: true, Selection: model.Selection{HalfDistance: 12, Softness: 1}}, FractionsOfGalaxy, "are the Galaxy's"},
		{model.Spec{}, FractionsUnused, ""},
	} {
		s := &Summary{FractionsOf: fractionsOf(&c.spec)}
		if s.FractionsOf != c.want {
			t.Errorf("fractions of %q, want %q", s.FractionsOf, c.want)
		}
		text := s.Text()
		if c.text != "" && !strings.Contains(text, c.text) {
			t.Errorf("%s: the text summary does not say %q:\n%s", c.want, c.text, text)
		}
		if c.text == "" && strings.Contains(text, "Membership fractions") {
			t.Errorf("%s: the text summary speaks of fractions it does not use", c.want)
		}
		data, err := JSONIndent(s)
		if err != nil {
			t.Fatal(err)
		}
		var back map[string]any
		if err := json.Unmarshal(data, &back); err != nil {
			t.Fatal(err)
		}
		if back["fractions_of"] != c.want {
			t.Errorf("summary.json fractions_of = %v, want %q", back["fractions_of"], c.want)
		}
	}
}
