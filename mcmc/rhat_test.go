package mcmc

import (
	"encoding/csv"
	"math"
	"os"
	"strconv"
	"testing"
)

// readCSV reads a small reference CSV with a header line.
func readCSV(t *testing.T, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return rows[1:]
}

func parseFloat(t *testing.T, s string) float64 {
	t.Helper()
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		t.Fatal(err)
	}
	return v
}

// R̂, bulk ESS and tail ESS against the R package 'posterior' 1.4.0 by
// the authors of Vehtari et al. (2021), on chains generated in R
// (testdata/mcmc/rhat_reference.R). The algorithms are deterministic, so the
// values must agree to rounding (relative 1e-9; the FFTs differ).
func TestRhatESSAgainstPosterior(t *testing.T) {
	chains := map[string][][]float64{}
	for _, r := range readCSV(t, "../testdata/mcmc/rhat_chains.csv") {
		m, _ := strconv.Atoi(r[1])
		for len(chains[r[0]]) <= m {
			chains[r[0]] = append(chains[r[0]], nil)
		}
		chains[r[0]][m] = append(chains[r[0]][m], parseFloat(t, r[3]))
	}
	refs := readCSV(t, "../testdata/mcmc/rhat_reference.csv")
	if len(refs) != 5 {
		t.Fatalf("%d reference cases, want 5", len(refs))
	}
	for _, r := range refs {
		c := chains[r[0]]
		for _, q := range []struct {
			name string
			got  float64
			want string
		}{
			{"rhat", SplitRhat(c), r[1]},
			{"ess_bulk", BulkESS(c), r[2]},
			{"ess_tail", TailESS(c), r[3]},
		} {
			want := parseFloat(t, q.want)
			if math.Abs(q.got-want) > 1e-9*math.Abs(want) {
				t.Errorf("case %s: %s = %.15g, posterior gives %.15g", r[0], q.name, q.got, want)
			}
		}
	}
}

// Degenerate input gives NaN rather than a number.
func TestRhatDegenerate(t *testing.T) {
	for name, c := range map[string][][]float64{
		"constant":  {{1, 1, 1, 1, 1}, {1, 1, 1, 1, 1}},
		"too short": {{1, 2, 3}, {2, 3, 4}},
		"NaN":       {{1, 2, math.NaN(), 4}, {2, 3, 4, 5}},
		"empty":     {},
	} {
		if v := SplitRhat(c); !math.IsNaN(v) {
			t.Errorf("%s: SplitRhat = %v, want NaN", name, v)
		}
		if v := BulkESS(c); !math.IsNaN(v) {
			t.Errorf("%s: BulkESS = %v, want NaN", name, v)
		}
	}
}
