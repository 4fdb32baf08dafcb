package mcmc

import (
	"slices"
	"strings"
	"testing"
)

// A chain file in the documented layout, written by hand (the reference is
// the layout in the package documentation).
const handChain = `# made by hand
#second comment
step,walker,log_density,alpha,beta
2,0,-1.5,0.25,1e-05
2,1,-2,-3,4
4,0,-0.5,1,2
4,1,-1,5,6.5
`

func TestReadChainLayout(t *testing.T) {
	c, err := ReadChain(strings.NewReader(handChain))
	if err != nil {
		t.Fatal(err)
	}
	if !slices.Equal(c.Names, []string{"alpha", "beta"}) || c.Len() != 2 || c.Walkers() != 2 || c.Dim() != 2 {
		t.Fatalf("names %v, %d rows, %d walkers", c.Names, c.Len(), c.Walkers())
	}
	if c.Step(0) != 2 || c.Step(1) != 4 {
		t.Errorf("steps %v, want [2 4]", c.Steps())
	}
	if c.Position(0, 0, nil)[1] != 1e-5 || c.Position(1, 1, nil)[1] != 6.5 || c.LogDensity(0, 1) != -2 || c.LogDensity(1, 0) != -0.5 {
		t.Errorf("values read wrongly: %v", c.Samples(0))
	}
	if row := c.Positions(1, nil); len(row) != 2 || !slices.Equal(row[0], []float64{1, 2}) || !slices.Equal(row[1], []float64{5, 6.5}) {
		t.Errorf("Positions(1) = %v, want [[1 2] [5 6.5]]", row)
	}
	s := c.Series(0, 1)
	if len(s) != 2 || len(s[0]) != 1 || s[0][0] != 1 || s[1][0] != 5 {
		t.Errorf("Series(0, 1) = %v, want [[1] [5]]", s)
	}
	flat := c.Samples(0)
	if len(flat) != 4 || flat[3][0] != 5 || flat[1][1] != 4 {
		t.Errorf("Samples = %v", flat)
	}
	lps := c.LogDensitySeries(0)
	if lps[1][1] != -1 {
		t.Errorf("LogDensitySeries = %v", lps)
	}
}

func TestReadChainErrors(t *testing.T) {
	head := "step,walker,log_density,a\n"
	for _, c := range []struct {
		name, text, want string
	}{
		{"empty", "", "no header"},
		{"bad header", "step,walker,a\n1,0,0\n", "header"},
		{"duplicate name", "step,walker,log_density,a,a\n", "twice"},
		{"walker order", head + "1,0,0,0\n1,2,0,0\n", "walker 2 where walker 1"},
		{"step order", head + "2,0,0,0\n1,0,0,0\n", "step 1 after step 2"},
		{"missing walker at end", head + "1,0,0,0\n1,1,0,0\n2,0,0,0\n", "cut short"},
		{"no final newline", head + "1,0,0,0\n1,1,0,0", "cut short"},
		{"bad number", head + "1,0,0,x\n", "a = \"x\""},
		{"bad step", head + "one,0,0,0\n", "step \"one\""},
		{"field count", head + "1,0,0,0,9\n2,0,0,0\n", "fields"},
		{"uneven steps", head + "1,0,0,0\n1,1,0,0\n2,0,0,0\n3,0,0,0\n", "has 1 walkers"},
	} {
		_, err := ReadChain(strings.NewReader(c.text))
		if err == nil || !strings.Contains(err.Error(), c.want) {
			t.Errorf("%s: %v, want an error containing %q", c.name, err, c.want)
		}
	}
}

func TestMergeChains(t *testing.T) {
	a, err := ReadChain(strings.NewReader(handChain))
	if err != nil {
		t.Fatal(err)
	}
	b, _ := ReadChain(strings.NewReader(strings.SplitAfter(handChain, "2,1,-2,-3,4\n")[0]))
	m, err := MergeChains(a, b)
	if err != nil {
		t.Fatal(err)
	}
	if m.Len() != 1 || m.Walkers() != 4 || m.Position(0, 3, nil)[0] != -3 || m.LogDensity(0, 2) != -1.5 {
		t.Errorf("merged: %d rows, %d walkers, %v", m.Len(), m.Walkers(), m.Samples(0))
	}
	other := strings.Replace(handChain, "alpha", "gamma", 1)
	c, _ := ReadChain(strings.NewReader(other))
	if _, err := MergeChains(a, c); err == nil {
		t.Error("merging chains with different parameters should fail")
	}
}

func TestNamesValidated(t *testing.T) {
	for _, names := range [][]string{
		{"a", "b,c"}, {"a", ""}, {"a", "a"}, {"a", "step"}, {"a", " b"}, {"a"},
	} {
		_, err := Run(t.Context(), Problem{func(x []float64) float64 { return 0 }, 2},
			Start{Center: []float64{0, 0}, Scale: []float64{1, 1}}, &Settings{Steps: 1, Names: names})
		if err == nil {
			t.Errorf("names %q accepted", names)
		}
	}
}

// seriesEvery keeps kept rows f−1, 2f−1, … of Series (the thinning of the estimates
// during a run).
func TestSeriesEvery(t *testing.T) {
	c := NewChain([]string{"a", "b"}, 2)
	for s := 1; s <= 11; s++ {
		c.Append(s, [][]float64{{float64(s), -float64(s)}, {10 * float64(s), 0}}, []float64{0, 0})
	}
	for _, f := range []int{1, 2, 3, 5, 11, 12} {
		got := c.seriesEvery(0, f)
		full := c.Series(0, 0)
		for k := range full {
			var want []float64
			for t := f - 1; t < len(full[k]); t += f {
				want = append(want, full[k][t])
			}
			if !slices.Equal(got[k], want) && !(len(got[k]) == 0 && len(want) == 0) {
				t.Errorf("f = %d walker %d: %v, want %v", f, k, got[k], want)
			}
		}
	}
}
