package plots

import (
	"math"
	"testing"

	"gonum.org/v1/plot/vg"
)

func testMembers(n int) []MemberSource {
	var out []MemberSource
	for _, s := range testSources(n, 6) {
		out = append(out, MemberSource{Name: s.Name, Prob: s.Prob, TiedArm: s.TiedArm})
	}
	return out
}

func TestMembershipRenders(t *testing.T) {
	m, err := NewMembershipPlot(MembershipData{Arms: testArmList(), Sources: testMembers(40)})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, m, 6*vg.Inch, 5*vg.Inch)

	// A few hundred sources spread over columns.
	m, err = NewMembershipPlot(MembershipData{Arms: testArmList(), Sources: testMembers(300)})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, m, 10*vg.Inch, 8*vg.Inch)
}

func TestMembershipEdgeCases(t *testing.T) {
	m, err := NewMembershipPlot(MembershipData{Arms: testArmList()})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, m, 4*vg.Inch, 3*vg.Inch)

	src := []MemberSource{
		{Name: "only", Prob: []float64{math.NaN(), 0.4, math.Inf(1), -1}},
		{Name: "tied", TiedArm: 2},
		{Name: "none"},
	}
	m, err = NewMembershipPlot(MembershipData{Arms: testArmList(), Sources: src})
	if err != nil {
		t.Fatal(err)
	}
	saveBoth(t, m, 4*vg.Inch, 3*vg.Inch)

	if _, err := NewMembershipPlot(MembershipData{Arms: testArmList()[:1], Sources: src}); err == nil {
		t.Error("a tie to a missing arm: no error")
	}
}

func TestMembershipOrder(t *testing.T) {
	src := []MemberSource{
		{Name: "f", Prob: []float64{0.9, 0.1, 0}},
		{Name: "b-low", Prob: []float64{0.1, 0.3, 0.6}},
		{Name: "a-low", Prob: []float64{0.2, 0.5, 0.3}},
		{Name: "b-tied", TiedArm: 2},
		{Name: "a-high", Prob: []float64{0, 0.95, 0.05}},
	}
	arms := []Arm{{Name: "Vireo"}, {Name: "Lantern"}}
	m, err := NewMembershipPlot(MembershipData{Arms: arms, Sources: src})
	if err != nil {
		t.Fatal(err)
	}
	want := []string{"a-high", "a-low", "b-tied", "b-low", "f"}
	for i, r := range m.rows {
		if r.Name != want[i] {
			t.Fatalf("order %v, want %v", names(m.rows), want)
		}
	}
	m, _ = NewMembershipPlot(MembershipData{Arms: arms, Sources: src, KeepOrder: true})
	for i, r := range m.rows {
		if r.Name != src[i].Name {
			t.Fatalf("KeepOrder gave %v", names(m.rows))
		}
	}
	// Bar segments: arms in order, then the field; a bare tie fills its arm.
	got := shares(src[3], 2)
	if got[0] != 0 || got[1] != 1 || got[2] != 0 {
		t.Errorf("tied shares %v, want [0 1 0]", got)
	}
	got = shares(src[1], 2)
	if got[0] != 0.3 || got[1] != 0.6 || got[2] != 0.1 {
		t.Errorf("shares %v, want [0.3 0.6 0.1]", got)
	}
}

func names(rows []MemberSource) []string {
	var out []string
	for _, r := range rows {
		out = append(out, r.Name)
	}
	return out
}

func TestMembershipCompact(t *testing.T) {
	// Ten thousand sources: drawn compact, at a fixed size that does not grow with
	// the catalog.
	m, err := NewMembershipPlot(MembershipData{Arms: testArmList(), Sources: testMembers(10000)})
	if err != nil {
		t.Fatal(err)
	}
	if !m.Compact() {
		t.Fatal("10000 sources not drawn compact")
	}
	saveBoth(t, m, 10*vg.Inch, 5*vg.Inch)
	few, _ := NewMembershipPlot(MembershipData{Arms: testArmList(), Sources: testMembers(300)})
	never, _ := NewMembershipPlot(MembershipData{Arms: testArmList(), Sources: testMembers(400), CompactAbove: -1})
	if few.Compact() || never.Compact() {
		t.Error("300 sources, or compact switched off, drawn compact")
	}
}
