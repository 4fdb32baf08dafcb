package spelling

import "testing"

// TestDistance checks textbook Levenshtein distances (common practice, no source; the
// kitten/sitting pair is the usual worked example).
func TestDistance(t *testing.T) {
	for _, c := range []struct {
		a, b string
		d    int
	}{
		{"kitten", "sitting", 3}, {"", "abc", 3}, {"abc", "", 3}, {"flaw", "lawn", 2},
		{"same", "same", 0}, {"parallax", "paralax", 1},
	} {
		if got := Distance(c.a, c.b); got != c.d {
			t.Errorf("Distance(%q, %q) = %d, want %d", c.a, c.b, got, c.d)
		}
		if got := Distance(c.b, c.a); got != c.d {
			t.Errorf("Distance(%q, %q) = %d, want %d", c.b, c.a, got, c.d)
		}
	}
}

func TestNearest(t *testing.T) {
	known := []string{"tolerance", "error_model", "student_dof", "R0"}
	for _, c := range []struct{ word, want string }{
		{"tolerence", "tolerance"},
		{"eror_model", "error_model"},
		{"TOLERANCE", "tolerance"},
		{"r0", "R0"},
		{"x", ""},       // too short to guess
		{"walkers", ""}, // nothing near
		{"student_dofs", "student_dof"},
	} {
		if got := Nearest(c.word, known); got != c.want {
			t.Errorf("Nearest(%q) = %q, want %q", c.word, got, c.want)
		}
	}
}
