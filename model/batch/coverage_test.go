package batch

import (
	"math"
	"testing"
)

// TestRankUniformity checks Pearson's χ² of rank histograms: uniform ranks give 0 and
// p = 1, and the p-value at the tabulated 1% point of χ² with 9 degrees of freedom,
// 21.666 (handbook χ² tables, e.g. Abramowitz & Stegun table 26.8), is 0.01.
func TestRankUniformity(t *testing.T) {
	var ranks []int
	for r := range 100 {
		ranks = append(ranks, r)
	}
	h, chi, p := rankUniformity(ranks, 99, 10)
	for _, c := range h {
		if c != 10 {
			t.Fatalf("uniform ranks binned as %v", h)
		}
	}
	if chi != 0 || math.Abs(p-1) > 1e-12 {
		t.Errorf("uniform ranks: χ² %g, p %g; want 0 and 1", chi, p)
	}
	// All in the lowest bin: (100−10)²/10 + 9·10 = 900.
	_, chi, p = rankUniformity(make([]int, 100), 99, 10)
	if chi != 900 || p > 1e-100 {
		t.Errorf("piled-up ranks: χ² %g, p %g; want 900 and about 0", chi, p)
	}
	// The top rank, 99, falls in the last bin.
	if h, _, _ := rankUniformity([]int{99, 0}, 99, 10); h[9] != 1 || h[0] != 1 {
		t.Errorf("ranks 0 and 99 binned as %v", h)
	}
	// Against the tabulated points of χ² with 9 degrees of freedom: 16.919 at 5% and
	// 21.666 at 1%. Counts (20, 1, 9, 10 …) give χ² = 10 + 8.1 + 0.1 = 18.2, between them;
	// counts (21, 0, 9, 10 …) give 12.1 + 10 + 0.1 = 22.2, beyond the 1% point.
	_, chi, p = rankUniformity(ranksWithCounts(20, 1, 9), 99, 10)
	if math.Abs(chi-18.2) > 1e-9 || !(p < 0.05 && p > 0.01) {
		t.Errorf("χ² %g, p %g; want 18.2 with 0.01 < p < 0.05", chi, p)
	}
	_, chi, p = rankUniformity(ranksWithCounts(21, 0, 9), 99, 10)
	if math.Abs(chi-22.2) > 1e-9 || !(p < 0.01) {
		t.Errorf("χ² %g, p %g; want 22.2 with p < 0.01", chi, p)
	}
}

// ranksWithCounts returns ranks among 99 draws whose histogram in 10 bins starts with
// the given counts and holds 10 in every other bin.
func ranksWithCounts(first ...int) []int {
	var out []int
	for b := range 10 {
		n := 10
		if b < len(first) {
			n = first[b]
		}
		for range n {
			out = append(out, b*10+9)
		}
	}
	return out
}
