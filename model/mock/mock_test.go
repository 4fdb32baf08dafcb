package mock

import (
	"bytes"
	"fmt"
	"math"
	"os"
	"strings"
	"testing"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"gonum.org/v1/gonum/stat"
)

// survey is the survey of the test: precise kinematics, a declination band and a distance
// range.
const survey = `
[likelihood]
distance_range = [0.5, 15]

[selection]
declination = [-30, 60]

[survey]
sources = 3000
seed = 5
fractions = { field = 0.2, Corvid = 0.5 }
parallax_error = [0.01, 0.002]
proper_motion_error = [0.002, 0.0]
velocity_error = 0.1
labelled = 0.25
galactic_share = 0.3
missing_share = 0
`

// testGalaxy reads the two-armed test galaxy of testdata/mock and adds the survey.
func testGalaxy(t *testing.T, survey string) []byte {
	t.Helper()
	data, err := os.ReadFile("../../testdata/mock/two-arms.toml")
	if err != nil {
		t.Fatal(err)
	}
	return append(data, survey...)
}

// TestDrawFollowsTheModel checks the mock against the model it draws from: the selection
// holds, the shares of the components follow the fractions, arm sources scatter about their
// arm's centre line as N(0, w) across it, and the peculiar motions recovered from the mock's
// observables at the true distances (by the inverse transformation, itself checked against
// astropy in package model) have the configured mean and the dispersion σ_vir. Tolerances
// are four standard errors of the sample statistics.
func TestDrawFollowsTheModel(t *testing.T) {
	m, err := Parse(testGalaxy(t, survey), "galaxy.toml", t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	spec, err := fit.SpecFromConfig(m.Config)
	if err != nil {
		t.Fatal(err)
	}
	src, truth, err := m.Draw(spec, nil)
	if err != nil {
		t.Fatal(err)
	}
	p, err := spec.NewParams(m.Truth)
	if err != nil {
		t.Fatal(err)
	}
	var across [2][]float64
	var pec [3][]float64 // sources outside R = 6 kpc, beyond the bar's reach
	labelled, arm := 0, 0
	for i, s := range src {
		tr := truth[i]
		dec := s.Lat
		if s.Frame == catalog.Galactic {
			_, dec = model.GalacticToICRS(s.Lon, s.Lat)
		}
		if dec < -30-1e-6 || dec > 60+1e-6 {
			t.Errorf("%s: declination %g outside the survey's range", s.Name, dec)
		}
		if tr.Distance < 0.5 || tr.Distance > 15 {
			t.Errorf("%s: distance %g outside the survey's range", s.Name, tr.Distance)
		}
		if tr.Component != "field" {
			arm++
			if s.Arm != "" {
				labelled++
				if s.Arm != tr.Component {
					t.Errorf("%s: labelled %s, truly on %s", s.Name, s.Arm, tr.Component)
				}
			}
			k := 0
			if tr.Component == "Tamarisk" {
				k = 1
			}
			a := p.Layout.Arms[k]
			beta := tr.Beta * math.Pi / 180
			across[k] = append(across[k], a.Offset(tr.R, beta)/a.Width)
		}
		prepared, err := model.NewSources(&catalog.Catalog{Sources: []catalog.Source{s}}, spec)
		if err != nil {
			t.Fatal(err)
		}
		if uvw, ok := prepared[0].PeculiarMotion(p.Motion, tr.Distance); ok && tr.R > 6 {
			pec[0], pec[1], pec[2] = append(pec[0], uvw.U), append(pec[1], uvw.V), append(pec[2], uvw.W)
		}
	}
	// Shares follow the fractions when nothing is selected (the selection above favours the
	// arms, which lie nearer): binomial standard errors.
	open := strings.NewReplacer("declination = [-30, 60]", "", "distance_range = [0.5, 15]", "distance_range = [0.05, 60]").Replace(survey)
	mAll, err := Parse(testGalaxy(t, open), "galaxy.toml", t.TempDir())
	if err != nil {
		t.Fatal(err)
	}
	specAll, err := fit.SpecFromConfig(mAll.Config)
	if err != nil {
		t.Fatal(err)
	}
	_, all, err := mAll.Draw(specAll, nil)
	if err != nil {
		t.Fatal(err)
	}
	// The truth file gives the Galaxy's fractions and the catalog's shares, which the
	// selection makes differ: the declination band and the distance range favour the arms.
	var tb bytes.Buffer
	m.WriteTruth(&tb, truth)
	nField := 0
	for _, tr := range truth {
		if tr.Component == "field" {
			nField++
		}
	}
	line := fmt.Sprintf("# field: galaxy 0.2000, catalog %.4f (%d of %d)\n", float64(nField)/float64(len(truth)), nField, len(truth))
	if !strings.Contains(tb.String(), line) || !strings.Contains(tb.String(), "\nname,component,distance,R,beta,z\n") {
		t.Errorf("truth file does not give the field's fraction and share as %q:\n%.300s", line, tb.String())
	}
	if se := math.Sqrt(0.2 * 0.8 / float64(len(truth))); math.Abs(float64(nField)/float64(len(truth))-0.2) < 4*se {
		t.Errorf("the field's share of the selected catalog, %d of %d, is its Galaxy fraction 0.2: the selection should favour the arms", nField, len(truth))
	}
	shares := map[string]int{}
	for _, tr := range all {
		shares[tr.Component]++
	}
	for name, f := range map[string]float64{"field": 0.2, "Corvid": 0.5, "Tamarisk": 0.3} {
		se := math.Sqrt(f * (1 - f) / float64(len(all)))
		if got := float64(shares[name]) / float64(len(all)); math.Abs(got-f) > 4*se {
			t.Errorf("share of %s: %.4f, want %.2f ± %.4f", name, got, f, 4*se)
		}
	}
	if se := math.Sqrt(0.25 * 0.75 / float64(arm)); math.Abs(float64(labelled)/float64(arm)-0.25) > 4*se {
		t.Errorf("labelled share %d of %d, want 0.25", labelled, arm)
	}
	for k, x := range across {
		mean, sd := stat.MeanStdDev(x, nil)
		nn := float64(len(x))
		if math.Abs(mean) > 4/math.Sqrt(nn) || math.Abs(sd-1) > 4/math.Sqrt(2*nn) {
			t.Errorf("arm %d: offsets across the arm in widths have mean %.3f and sd %.3f over %d sources, want 0 and 1", k, mean, sd, len(x))
		}
	}
	// Peculiar motions beyond the bar's reach: mean (Us, Vs, Ws) and dispersion σ_vir = 6
	// km/s; the measurement errors chosen above add less than 0.2 km/s.
	want := [3]float64{2, -3, 1}
	for c, x := range pec {
		mean, sd := stat.MeanStdDev(x, nil)
		nn := float64(len(x))
		if math.Abs(mean-want[c]) > 4*6/math.Sqrt(nn) {
			t.Errorf("peculiar motion component %d: mean %.3f over %d sources, want %g", c, mean, len(x), want[c])
		}
		if math.Abs(sd-6) > 4*6/math.Sqrt(2*nn)+0.2 {
			t.Errorf("peculiar motion component %d: sd %.3f over %d sources, want σ_vir = 6", c, sd, len(x))
		}
	}
}
