package catalog

import (
	"errors"
	"strings"
	"testing"
)

// TestSeparatorAndUnitsHints checks that a tab- or semicolon-separated file and a row of
// units under the header are refused with one problem naming the likely cause, rather
// than a list of unknown columns or bad numbers.
func TestSeparatorAndUnitsHints(t *testing.T) {
	for _, c := range []struct {
		name, text, want string
	}{
		{"tabs", "name\tra\tdec\tparallax\tparallax_err\ns1\t1\t2\t0.5\t0.01\n", "separated by tabs"},
		{"semicolons", "name;ra;dec;parallax;parallax_err\ns1;1;2;0,5;0,01\n", "separated by semicolons"},
		{"units", "name,ra,dec,parallax,parallax_err\n,deg,deg,mas,mas\ns1,1,2,0.5,0.01\n", "looks like units (deg, deg, mas, mas)"},
		{"bracketed units", "name,l,b,parallax,parallax_err,vlsr,vlsr_err\n[],[deg],[deg],[mas],[mas],[km/s],[km/s]\ns1,1,2,0.5,0.01,3,1\n", "looks like units"},
	} {
		_, err := Read(strings.NewReader(c.text), "c.csv")
		var ce *Error
		if !errors.As(err, &ce) {
			t.Errorf("%s: got %v", c.name, err)
			continue
		}
		if len(ce.Problems) != 1 || !strings.Contains(ce.Problems[0].Reason, c.want) {
			t.Errorf("%s: %v", c.name, err)
		}
	}
	// A first row that merely has a bad number is not taken for units.
	_, err := Read(strings.NewReader("name,ra,dec,parallax,parallax_err\ns1,1,2,abc,0.01\n"), "c.csv")
	if err == nil || strings.Contains(err.Error(), "units") {
		t.Errorf("bad number: %v", err)
	}
}

// TestCommentWithHeaderWidth checks that comments are whole lines, that a comment line
// with the header's number of fields is reported as a warning, and that a quoted name
// starting with '#' is a source.
func TestCommentWithHeaderWidth(t *testing.T) {
	text := "name,ra,dec,parallax,parallax_err\n" +
		"# a note\n" +
		"#m9,1,2,0.5,0.01\n" +
		"\"#m10\",1,2,0.5,0.01\n" +
		"s1,3,4,0.5,0.01\n"
	cat, err := Read(strings.NewReader(text), "c.csv")
	if err != nil {
		t.Fatal(err)
	}
	if len(cat.Sources) != 2 || cat.Sources[0].Name != "#m10" || cat.Sources[1].Name != "s1" {
		t.Errorf("sources %+v", cat.Sources)
	}
	if len(cat.Warnings) != 1 || cat.Warnings[0].Line != 3 || cat.Warnings[0].File != "c.csv" ||
		!strings.Contains(cat.Warnings[0].Reason, "header's 5 fields") {
		t.Errorf("warnings %+v", cat.Warnings)
	}
}
