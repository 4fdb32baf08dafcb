package param

import (
	"slices"
	"testing"
)

// The names below are the project's own conventions (common practice, no source): the
// trade's symbols R0, Θ0, U⊙ V⊙ W⊙ and the Oort constants written in ASCII, arm parameters
// named after their arm.

// TestLookupByKind checks that a name is read by the model's arms and not by its prefix:
// with an arm named "f", f_pitch is that arm's pitch angle and f_f its fraction.
func TestLookupByKind(t *testing.T) {
	arms := []string{"f", "Lantern"}
	for _, c := range []struct {
		name string
		kind Kind
		arm  string
		unit string
	}{
		{"R0", Global, "", "kpc"},
		{"dTheta_dR", Global, "", "km/s/kpc"},
		{"alpha", Global, "", ""},
		{"Theta_3", Global, "", "km/s"},
		{"width_slope", Global, "", "kpc/kpc"},
		{"f_pitch", Arm, "f", "deg"},
		{"f_Rref", Arm, "f", "kpc"},
		{"f_f", Fraction, "f", ""},
		{"f_field", Fraction, "", ""},
		{"f_Lantern", Fraction, "Lantern", ""},
		{"Lantern_pitch2", Arm, "Lantern", "deg"},
		{"Lantern_Rsun", Derived, "Lantern", "kpc"},
		{"Oort_B", Derived, "", "km/s/kpc"},
	} {
		info, ok := Lookup(c.name, arms)
		if !ok || info.Kind != c.kind || info.Arm != c.arm || info.Unit != c.unit {
			t.Errorf("Lookup(%q) = %+v, %v; want kind %v, arm %q, unit %q", c.name, info, ok, c.kind, c.arm, c.unit)
		}
	}
	for _, name := range []string{"f_Corvid", "Corvid_pitch", "Theta_0", "Theta_01", "R_0", "stick_1", ""} {
		if info, ok := Lookup(name, arms); ok {
			t.Errorf("Lookup(%q) = %+v, want no entry", name, info)
		}
	}
	if info, _ := Lookup("Theta_12", nil); info.Node != 12 {
		t.Errorf("Theta_12: node %d, want 12", info.Node)
	}
}

func TestNameLists(t *testing.T) {
	if got, want := ArmNames("Corvid", true), []string{"Corvid_Rref", "Corvid_pitch", "Corvid_pitch2", "Corvid_kink", "Corvid_width"}; !slices.Equal(got, want) {
		t.Errorf("ArmNames(kinked) = %v, want %v", got, want)
	}
	if got, want := ArmNames("Corvid", false), []string{"Corvid_Rref", "Corvid_pitch", "Corvid_width"}; !slices.Equal(got, want) {
		t.Errorf("ArmNames = %v, want %v", got, want)
	}
	if got, want := FractionNames([]string{"a", "b"}), []string{"f_field", "f_a", "f_b"}; !slices.Equal(got, want) {
		t.Errorf("FractionNames = %v, want %v", got, want)
	}
	want := []string{"Omega_sun", "Theta0_over_R0", "Theta0_plus_Vsun", "Oort_A", "Oort_B", "Theta0", "a_Rsun"}
	if got := DerivedNames(true, []string{"a"}); !slices.Equal(got, want) {
		t.Errorf("DerivedNames(nodes) = %v, want %v", got, want)
	}
	want = slices.Delete(want, 5, 6)
	if got := DerivedNames(false, []string{"a"}); !slices.Equal(got, want) {
		t.Errorf("DerivedNames = %v, want %v", got, want)
	}
	for _, name := range []string{"Theta_1", "Theta_10"} {
		if !IsNodeName(name) {
			t.Errorf("IsNodeName(%q) = false", name)
		}
	}
	for _, name := range []string{"Theta_0", "Theta_01", "Theta_+1", "Theta_", "Theta_1x", "Theta0"} {
		if IsNodeName(name) {
			t.Errorf("IsNodeName(%q) = true", name)
		}
	}
	if !IsStickName("stick_2") || IsStickName("stick_02") || IsStickName("stick_0") {
		t.Error("IsStickName")
	}
}

// TestTableComplete checks every row has a kind and a description, and that names do not
// repeat.
func TestTableComplete(t *testing.T) {
	seen := map[string]bool{}
	for _, e := range Table() {
		if e.Kind == 0 || e.Description == "" || e.Name == "" {
			t.Errorf("incomplete row %+v", e)
		}
		if seen[e.Name] {
			t.Errorf("%s listed twice", e.Name)
		}
		seen[e.Name] = true
		if e.form == exact && !CouldBe(e.Name) {
			t.Errorf("CouldBe(%q) = false", e.Name)
		}
	}
}
