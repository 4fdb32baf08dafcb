package model

import (
	"encoding/csv"
	"math"
	"os"
	"path/filepath"
	"strconv"
	"testing"
)

// TestInPlaneUnchanged holds the in-plane likelihood (no vertical structure, no selection)
// to the values of the version before the vertical layer and the selection were added:
// testdata/likelihood/inplane_lnl.csv, written by gen_inplane_table.go at commit 576173e,
// with quadratures laid out at the truth and ln L_i at five parameter sets, for two error
// models and both distance modes. Every value agrees to 1e-12 (relative, or absolute
// below 1).
func TestInPlaneUnchanged(t *testing.T) {
	f, err := os.Open(filepath.Join(refDir, "inplane_lnl.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	rows, err := r.ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	want := map[string]map[string]map[string]float64{}
	for _, row := range rows[1:] {
		v, err := strconv.ParseFloat(row[3], 64)
		if err != nil {
			t.Fatal(err)
		}
		if want[row[0]] == nil {
			want[row[0]] = map[string]map[string]float64{}
		}
		if want[row[0]][row[1]] == nil {
			want[row[0]][row[1]] = map[string]float64{}
		}
		want[row[0]][row[1]][row[2]] = v
	}
	if len(want) != 3 {
		t.Fatalf("%d variants in the table, want 3", len(want))
	}
	for variant, sets := range want {
		L, spec, _ := refLikelihood(t, variant, []string{"truth"})
		if spec.Vertical || spec.Selection.Active() {
			t.Fatalf("%s: the spec has a layer or a selection", variant)
		}
		var worst float64
		for set, vals := range sets {
			p := refParams(t, spec, set)
			for i, s := range L.Sources {
				w, ok := vals[s.Name]
				if !ok {
					t.Fatalf("%s %s: no value for %s", variant, set, s.Name)
				}
				got := L.SourceLogL(i, p)
				d := math.Abs(got-w) / math.Max(1, math.Abs(w))
				worst = max(worst, d)
				if d > 1e-12 {
					t.Errorf("%s %s %s: ln L_i %.17g, before %.17g", variant, set, s.Name, got, w)
				}
			}
		}
		t.Logf("%s: largest relative difference %.2g", variant, worst)
	}
}
