package catalog

import (
	"bytes"
	"encoding/csv"
	"errors"
	"io/fs"
	"math"
	"os"
	"path/filepath"
	"reflect"
	"strconv"
	"strings"
	"testing"
	"testing/iotest"
)

// dataDir holds the example and bad catalogs used by these tests.
const dataDir = "../../testdata/catalog"

func m(v, e float64) Measurement { return Measurement{Value: v, Err: e, OK: true} }

func readTestFile(t *testing.T, name string) (*Catalog, error) {
	t.Helper()
	return ReadFile(filepath.Join(dataDir, name))
}

// sameSources compares sources field by field, angles within tol degrees
// (tol = 0 demands equality) and everything else exactly.
func sameSources(t *testing.T, got, want []Source, tol float64) {
	t.Helper()
	if len(got) != len(want) {
		t.Fatalf("got %d sources, want %d:\n%+v", len(got), len(want), got)
	}
	for i := range want {
		g, w := got[i], want[i]
		if math.Abs(g.Lon-w.Lon) > tol || math.Abs(g.Lat-w.Lat) > tol {
			t.Errorf("source %d (%s): position (%.15g, %.15g), want (%.15g, %.15g)", i, w.Name, g.Lon, g.Lat, w.Lon, w.Lat)
		}
		g.Lon, g.Lat = w.Lon, w.Lat
		if !reflect.DeepEqual(g, w) {
			t.Errorf("source %d:\n got %+v\nwant %+v", i, g, w)
		}
	}
}

// The expected values below are read off the files by hand.

func TestReadDecimal(t *testing.T) {
	cat, err := readTestFile(t, "decimal.csv")
	if err != nil {
		t.Fatal(err)
	}
	want := []Source{
		{Name: "Corvid-7", Line: 4, Lon: 270.5, Lat: -21.25, Parallax: m(0.351, 0.021),
			PM1: m(-0.62, 0.05), PM2: m(-2.31, 0.07), VelLSR: true, Vel: m(17, 5), Arm: "Corvid"},
		{Name: "mock-0012", Line: 5, Lon: 283.6021, Lat: 1.0455, Parallax: m(0.112, 0.030),
			VelLSR: true, Vel: m(44.5, 3)},
		{Name: "Lantern-3", Line: 6, Lon: 95.25, Lat: 22.1, Parallax: m(-0.05, 0.06),
			PM1: m(0.41, 0.12), PM2: m(-0.88, 0.10)},
		{Name: "Tamarisk-1", Line: 7, Lon: 0, Lat: -90, Parallax: m(2.5, 0.1),
			PM1: m(0.1, 0.02), VelLSR: true, Vel: m(-3.5, 1.5), Arm: "Tamarisk"},
		{Name: "Halcyon-2", Line: 8, Lon: 359.999, Lat: 90, Parallax: m(0, 0.5),
			PM2: m(0.3, 0.04), Arm: "Halcyon"},
	}
	sameSources(t, cat.Sources, want, 0)
	wantHeader := strings.Split("name,ra,dec,parallax,parallax_err,pmra,pmra_err,pmdec,pmdec_err,vlsr,vlsr_err,arm", ",")
	if !reflect.DeepEqual(cat.Header, wantHeader) {
		t.Errorf("header %q, want %q", cat.Header, wantHeader)
	}
	if want := filepath.Join(dataDir, "decimal.csv"); cat.Path != want {
		t.Errorf("path %q, want %q", cat.Path, want)
	}
}

func TestReadSexagesimal(t *testing.T) {
	cat, err := readTestFile(t, "sexagesimal.csv")
	if err != nil {
		t.Fatal(err)
	}
	// Hand-computed: degrees = 15 × hours for right ascension;
	// h:m:s = h + m/60 + s/3600; the sign applies to the whole angle.
	want := []Source{
		// 18:00:00 = 18h × 15 = 270°; -05:30:00 = −(5 + 30/60) = −5.5°
		{Name: "Vireo-1", Line: 3, Lon: 270, Lat: -5.5, Parallax: m(0.5, 0.05)},
		// 05 14 32.4 = 5 + 0.23333… + 0.009 = 5.242333…h = 78.635°;
		// +12 15 36 = 12 + 0.25 + 0.01 = 12.26°
		{Name: "Vireo-2", Line: 4, Lon: 78.635, Lat: 12.26, Parallax: m(0.4, 0.05)},
		// 05h14m32.4s = 78.635°; -62d03m54s = −(62 + 0.05 + 0.015) = −62.065°
		{Name: "Vireo-3", Line: 5, Lon: 78.635, Lat: -62.065, Parallax: m(0.3, 0.05)},
		// 00:00:00.0 = 0°; -00:30:00 = −0.5° (sign on a zero degree part)
		{Name: "Vireo-4", Line: 6, Lon: 0, Lat: -0.5, Parallax: m(0.2, 0.05)},
		// 23:59:59.9 = 360° − 0.1 s × 15″/s = 360 − 1.5/3600 = 359.99958333…°;
		// +89:59:59.9 = 90 − 0.1/3600 = 89.99997222…°
		{Name: "Vireo-5", Line: 7, Lon: 360 - 1.5/3600, Lat: 90 - 0.1/3600, Parallax: m(0.1, 0.05)},
		// 12h30m = 12.5h = 187.5°; +45d = 45°
		{Name: "Vireo-6", Line: 8, Lon: 187.5, Lat: 45, Parallax: m(0.6, 0.05)},
		// 06:30 = 6.5h = 97.5°; -10:15.5 = −(10 + 15.5/60) = −10.258333…°
		{Name: "Vireo-7", Line: 9, Lon: 97.5, Lat: -(10 + 15.5/60), Parallax: m(0.7, 0.05)},
		// 06H30M00S = 97.5°; -10D15M30 = −(10 + 0.25 + 30/3600) = −10.258333…°
		{Name: "Vireo-8", Line: 10, Lon: 97.5, Lat: -(10.25 + 30.0/3600), Parallax: m(0.8, 0.05)},
		// 123.25 is decimal degrees; -0:00:36 = −36/3600 = −0.01°
		{Name: "Vireo-9", Line: 11, Lon: 123.25, Lat: -0.01, Parallax: m(0.9, 0.05)},
	}
	sameSources(t, cat.Sources, want, 1e-12)
}

// TestSexagesimalReference checks the sexagesimal parser against
// astropy.coordinates.Angle (sexagesimal_reference.py writes the file).
func TestSexagesimalReference(t *testing.T) {
	f, err := os.Open(filepath.Join(dataDir, "sexagesimal_reference.csv"))
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	if len(rows) < 10 {
		t.Fatalf("only %d rows in the reference file", len(rows))
	}
	for _, r := range rows[1:] {
		want, err := strconv.ParseFloat(r[2], 64)
		if err != nil {
			t.Fatal(err)
		}
		got, reason := parseSexagesimal(r[1], r[0] == "ra")
		if reason != "" {
			t.Errorf("%s %q: %s", r[0], r[1], reason)
			continue
		}
		// astropy converts hours to degrees through a different product;
		// the two agree to a few units in the last place.
		if math.Abs(got-want) > 1e-12 {
			t.Errorf("%s %q = %.17g°, astropy %.17g°", r[0], r[1], got, want)
		}
	}
}

func TestReadGalactic(t *testing.T) {
	cat, err := readTestFile(t, "galactic.csv")
	if err != nil {
		t.Fatal(err)
	}
	g := Galactic
	want := []Source{
		{Name: "mock-0101", Line: 4, Frame: g, Lon: 30.5, Lat: -0.25, Parallax: m(0.2, 0.02),
			PMFrame: g, PM1: m(-5.1, 0.3), PM2: m(-0.2, 0.3), Vel: m(95, 4), Arm: "Lantern"},
		// l = −10 wraps to 350
		{Name: "mock-0102", Line: 5, Frame: g, Lon: 350, Lat: 0.5, Parallax: m(0.15, 0.03), Vel: m(-20, 2)},
		// l = 360 wraps to 0
		{Name: "mock-0103", Line: 6, Frame: g, Lon: 0, Lat: 1, Parallax: m(0.4, 0.04),
			PMFrame: g, PM1: m(-3, 0.5)},
		// l = −360 wraps to 0
		{Name: "mock-0104", Line: 7, Frame: g, Lon: 0, Lat: -2, Parallax: m(0.3, 0.03),
			PMFrame: g, PM2: m(0.1, 0.05), Arm: "Lantern"},
		{Name: "mock-0105", Line: 8, Frame: g, Lon: 359.5, Lat: 90, Parallax: m(1.2, 0.1),
			Vel: m(12.5, 0.5), Arm: "Halcyon"},
		// l = −0.25 wraps to 359.75; arm "?" is free
		{Name: "mock-0106", Line: 9, Frame: g, Lon: 359.75, Lat: -90, Parallax: m(-0.1, 0.2)},
	}
	sameSources(t, cat.Sources, want, 0)
}

func TestReadMixed(t *testing.T) {
	cat, err := readTestFile(t, "mixed.csv")
	if err != nil {
		t.Fatal(err)
	}
	g := Galactic
	want := []Source{
		// 18:00:00 = 270°, -05:30:00 = −5.5°
		{Name: "Corvid-11", Line: 5, Lon: 270, Lat: -5.5, Parallax: m(0.25, 0.01),
			PM1: m(1, 0.1), PM2: m(2, 0.2), VelLSR: true, Vel: m(10, 1), Arm: "Corvid"},
		{Name: "Lantern, east knot", Line: 7, Frame: g, Lon: 120.5, Lat: -1.5, Parallax: m(0.1, 0.02),
			PMFrame: g, PM1: m(3, 0.3), PM2: m(-0.5, 0.2), Vel: m(-40, 5)},
		{Name: `say "Tamarisk"`, Line: 9, Lon: 10, Lat: 20, Parallax: m(0.5, 0.1)},
		// Galactic position with equatorial proper motion; a name starting
		// with '#' inside a row is not a comment.
		{Name: "#mock-9", Line: 11, Frame: g, Lon: 200, Lat: 5, Parallax: m(-0.3, 0.4),
			PM2: m(-1, 0.5), VelLSR: true, Vel: m(7, 2), Arm: "Vireo"},
	}
	sameSources(t, cat.Sources, want, 0)
	if cat.Header[0] != "Arm" || cat.Header[7] != "Parallax_Error" || len(cat.Header) != 20 {
		t.Errorf("header %q", cat.Header)
	}
}

func TestReadBOMAndCRLF(t *testing.T) {
	raw, err := os.ReadFile(filepath.Join(dataDir, "bom_crlf.csv"))
	if err != nil {
		t.Fatal(err)
	}
	// The test is only meaningful if the file kept its byte-order mark
	// and CRLF line ends.
	if !bytes.HasPrefix(raw, []byte("\xef\xbb\xbf")) || bytes.Count(raw, []byte("\r\n")) != 4 {
		t.Fatal("bom_crlf.csv lost its byte-order mark or CRLF line ends")
	}
	cat, err := Read(bytes.NewReader(raw), "bom_crlf.csv")
	if err != nil {
		t.Fatal(err)
	}
	want := []Source{
		{Name: "Halcyon-4", Line: 3, Lon: 10.5, Lat: -3.25, Parallax: m(0.8, 0.05),
			VelLSR: true, Vel: m(-12, 2), Arm: "Halcyon"},
		{Name: "mock-0200", Line: 4, Lon: 200, Lat: 40, Parallax: m(0.05, 0.1)},
	}
	sameSources(t, cat.Sources, want, 0)
	if cat.Header[0] != "name" || cat.Header[len(cat.Header)-1] != "arm" {
		t.Errorf("header %q: byte-order mark or CR left in", cat.Header)
	}

	// A byte-order mark straight before the header, without a comment.
	cat, err = Read(strings.NewReader("\uFEFFname,l,b,parallax,parallax_err\r\nmock-1,1,2,3,4"), "x.csv")
	if err != nil {
		t.Fatal(err)
	}
	sameSources(t, cat.Sources, []Source{{Name: "mock-1", Line: 2, Frame: Galactic, Lon: 1, Lat: 2, Parallax: m(3, 4)}}, 0)
}

// want describes one expected problem; reason is a part of the Reason.
type want struct {
	line, col int
	name      string
	value     string
	reason    string
}

func checkProblems(t *testing.T, cat *Catalog, err error, file string, wants []want) {
	t.Helper()
	if cat != nil {
		t.Errorf("a catalog of %d sources was returned with the error", len(cat.Sources))
	}
	var ce *Error
	if !errors.As(err, &ce) {
		t.Fatalf("error %v (%T), want *Error", err, err)
	}
	if len(ce.Problems) != len(wants) {
		t.Errorf("%d problems, want %d:\n%v", len(ce.Problems), len(wants), err)
	}
	for i, w := range wants {
		if i >= len(ce.Problems) {
			break
		}
		p := ce.Problems[i]
		if p.File != file || p.Line != w.line || p.Column != w.col || p.ColumnName != w.name ||
			p.Value != w.value || !strings.Contains(p.Reason, w.reason) {
			t.Errorf("problem %d:\n got %s:%d:%d (%s) %q: %s\nwant %s:%d:%d (%s) %q: …%s…",
				i, p.File, p.Line, p.Column, p.ColumnName, p.Value, p.Reason,
				file, w.line, w.col, w.name, w.value, w.reason)
		}
	}
}

// The expected problems below are read off the bad files by hand: line
// numbers count comment and blank lines, field numbers start at 1.
var badFiles = []struct {
	file  string
	wants []want
}{
	{"bad_header_unknown.csv", []want{
		{2, 6, "", "pm_ra", `unknown column (did you mean "pmra"?); known columns: name, ra, dec`},
		{2, 0, "pmra", "", "missing column pmra (its uncertainty pmra_err is given)"},
	}},
	{"bad_header_missing.csv", []want{
		{1, 0, "parallax_err", "", "missing column parallax_err (Parallax is given"},
	}},
	{"bad_header_pairs.csv", []want{
		{2, 8, "parallax_err", "Parallax_Error", "column given twice (also field 6)"},
		{2, 0, "dec", "", "missing column dec (ra is given"},
		{2, 0, "vlsr", "", "missing column vlsr (its uncertainty vlsr_err is given)"},
	}},
	{"bad_header_noposition.csv", []want{
		{1, 4, "", "", "empty column name"},
		{1, 0, "", "", "missing position columns: expected ra and dec, or l and b"},
	}},
	{"bad_header_commented.csv", []want{
		{3, 1, "", "Corvid-1", "unknown column; known columns: name, ra"},
		{3, 2, "", "10", "unknown column"},
		{3, 3, "", "20", "unknown column"},
		{3, 4, "", "0.5", "unknown column"},
		{3, 5, "", "0.1", "unknown column"},
		{3, 0, "name", "", "missing required column name (the header seems to be commented out on line 2"},
		{3, 0, "", "", "missing position columns"},
		{3, 0, "parallax", "", "missing required column parallax"},
		{3, 0, "parallax_err", "", "missing required column parallax_err"},
	}},
	{"bad_positions.csv", []want{
		{3, 4, "l", "30", "row gives both ra/dec and l/b; give exactly one position"},
		{4, 2, "ra", "", "no position: expected ra and dec, or l and b"},
		{5, 3, "dec", "", "dec is blank but ra is given"},
		{6, 5, "b", "", "b is blank but l is given"},
		{7, 2, "ra", "360", "right ascension must be in [0, 360) deg"},
		{8, 2, "ra", "-0.5", "right ascension must be in [0, 360) deg"},
		{9, 3, "dec", "-90.5", "declination must be in [-90, 90] deg"},
		{10, 5, "b", "91", "b must be in [-90, 90] deg"},
		{11, 4, "l", "400", "l must be in [-360, 360] deg"},
		{12, 2, "ra", "24:00:00", "right ascension must be in [0, 360) deg"},
		{13, 3, "dec", "-05:60:00", "minutes must be in [0, 60)"},
		{14, 2, "ra", "-01:00:00", "right ascension takes no sign"},
		{15, 4, "l", "12:30:00", "not read in sexagesimal form"},
		{16, 2, "ra", "10:30.5:00", "only the last part"},
		{17, 2, "ra", "10h30d", "expected unit letters h, m, s in that order"},
		{18, 2, "ra", "??", "expected decimal degrees or sexagesimal hh:mm:ss.s"},
		{19, 3, "dec", "20:00:60", "seconds must be in [0, 60)"},
		{20, 3, "dec", "91:00:00", "declination must be in [-90, 90] deg"},
	}},
	{"bad_values.csv", []want{
		{3, 4, "parallax", "abc", "expected a number (mas)"},
		{4, 5, "parallax_err", "-0.02", "uncertainty must be positive and finite"},
		{5, 5, "parallax_err", "0", "uncertainty must be positive and finite"},
		{6, 6, "pmra", "NaN", "value must be finite"},
		{7, 9, "pmdec_err", "Inf", "uncertainty must be positive and finite"},
		{8, 14, "vlsr", "1e999", "number out of range"},
		{9, 7, "pmra_err", "", "pmra_err is blank but pmra is given"},
		{10, 16, "vhelio", "", "vhelio is blank but its uncertainty vhelio_err is given"},
		{11, 10, "pml", "2", "row gives proper motions in both frames"},
		{12, 16, "vhelio", "6", "row gives both vlsr and vhelio"},
		{13, 4, "parallax", "", "parallax is required (mas), with its uncertainty parallax_err"},
		{14, 5, "parallax_err", "", "parallax_err is required"},
		{15, 6, "pmra", "0x10", "expected a number (mas/yr)"},
		{16, 13, "pmb_err", "-1", "uncertainty must be positive and finite"},
	}},
	{"bad_names.csv", []want{
		{4, 1, "name", "", "name is required"},
		{6, 1, "name", "Corvid-1", "duplicate name: also on line 3"},
		{7, 1, "name", "Corvid-2", "duplicate name: also on line 5"},
		{8, 6, "arm", "Cor\tvid", "arm label must not hold control characters"},
	}},
	{"bad_fields.csv", []want{
		{2, 6, "", "extra", "row has 6 fields, the header has 5"},
		{3, 5, "parallax_err", "", "row has 4 fields, the header has 5"},
		{4, 1, "name", `"mock-3,10,20,0.5,0.1`, "quoted field has no closing quote"},
		{5, 1, "name", `"mock-4"x`, "text after the closing quote"},
	}},
	{"bad_utf8.csv", []want{
		{4, 0, "", "", "line is not valid UTF-8 text"},
	}},
	{"empty.csv", []want{{0, 0, "", "", "no header row"}}},
	{"comments_only.csv", []want{{0, 0, "", "", "no header row"}}},
	{"header_only.csv", []want{{0, 0, "", "", "no sources: the header on line 2 is followed by no rows"}}},
}

func TestReadBadFiles(t *testing.T) {
	for _, bf := range badFiles {
		t.Run(bf.file, func(t *testing.T) {
			path := filepath.Join(dataDir, bf.file)
			cat, err := ReadFile(path)
			checkProblems(t, cat, err, path, bf.wants)
		})
	}
}

func TestErrorText(t *testing.T) {
	// The format of the package documentation:
	// file:line:field (column): value "text": reason.
	var b strings.Builder
	b.WriteString("name,ra,dec,parallax,parallax_err\n")
	for i := 2; i <= 13; i++ {
		b.WriteString("mock-" + strconv.Itoa(i) + ",10,20,0.5,0.1\n")
	}
	b.WriteString("mock-14,10,20,0.5,-0.02\n")
	_, err := Read(strings.NewReader(b.String()), "sources.csv")
	wantText := `sources.csv:14:5 (parallax_err): value "-0.02": uncertainty must be positive and finite`
	if err == nil || err.Error() != wantText {
		t.Errorf("error text\n%v\nwant\n%s", err, wantText)
	}

	// Several problems: a count, then one per line.
	_, err = Read(strings.NewReader("name,ra,dec,parallax,parallax_err\nmock-1,10,20,x,0.1\nmock-1,10,20,0.5,0.1\n"), "two.csv")
	wantText = "two.csv: catalog refused, 2 problems:\n" +
		`two.csv:2:4 (parallax): value "x": expected a number (mas)` + "\n" +
		`two.csv:3:1 (name): value "mock-1": duplicate name: also on line 2`
	if err == nil || err.Error() != wantText {
		t.Errorf("error text\n%v\nwant\n%s", err, wantText)
	}

	// A problem of the whole file, and one of a missing column.
	_, err = Read(strings.NewReader(""), "empty.csv")
	if err == nil || !strings.HasPrefix(err.Error(), "empty.csv: no header row") {
		t.Errorf("error text %q", err)
	}
	_, err = Read(strings.NewReader("name,ra,dec,parallax\n"), "h.csv")
	if err == nil || err.Error() != "h.csv:1 (parallax_err): missing column parallax_err (parallax is given; every value needs its uncertainty)" {
		t.Errorf("error text %q", err)
	}
}

func TestProblemLimit(t *testing.T) {
	const rows = MaxProblems + 12
	var b strings.Builder
	b.WriteString("name,ra,dec,parallax,parallax_err\n")
	for i := range rows {
		b.WriteString("mock-" + strconv.Itoa(i) + ",10,20,0.5,-1\n")
	}
	cat, err := Read(strings.NewReader(b.String()), "many.csv")
	if cat != nil {
		t.Error("catalog returned")
	}
	var ce *Error
	if !errors.As(err, &ce) {
		t.Fatalf("error %v", err)
	}
	if len(ce.Problems) != MaxProblems || ce.More != 12 {
		t.Errorf("%d problems listed and %d more, want %d and 12", len(ce.Problems), ce.More, MaxProblems)
	}
	last := ce.Problems[len(ce.Problems)-1]
	if last.Line != MaxProblems+1 {
		t.Errorf("last listed problem on line %d, want %d", last.Line, MaxProblems+1)
	}
	text := err.Error()
	if !strings.HasPrefix(text, "many.csv: catalog refused, 62 problems:\n") || !strings.HasSuffix(text, "\nand 12 more") {
		t.Errorf("error text begins %q, ends %q", text[:60], text[len(text)-30:])
	}
	if n := strings.Count(text, "\n"); n != MaxProblems+1 {
		t.Errorf("error text has %d lines, want %d", n+1, MaxProblems+2)
	}
}

func TestReadIOError(t *testing.T) {
	boom := errors.New("disk on fire")
	_, err := Read(iotest.ErrReader(boom), "x.csv")
	if !errors.Is(err, boom) {
		t.Errorf("error %v does not wrap the reader's error", err)
	}
	var ce *Error
	if errors.As(err, &ce) {
		t.Error("a read failure reported as a catalog problem")
	}
	_, err = ReadFile(filepath.Join(t.TempDir(), "missing.csv"))
	if !errors.Is(err, fs.ErrNotExist) {
		t.Errorf("error %v, want a wrapped fs.ErrNotExist", err)
	}
}

func TestReadSmallCases(t *testing.T) {
	const head = "name,ra,dec,l,b,parallax,parallax_err\n"
	for _, tc := range []struct {
		text string
		ok   bool
	}{
		{"mock-1,0,0,,,0.5,0.1", true},
		{"mock-1,359.9999999,0,,,0.5,0.1", true},
		{"mock-1,,,-360,0,0.5,0.1", true},
		{"mock-1,,,-360.0001,0,0.5,0.1", false},
		{"mock-1,,,360.0001,0,0.5,0.1", false},
		{"mock-1,,,0,-90,0.5,0.1", true},
		{"mock-1,,,0,-90.0001,0.5,0.1", false},
		{"mock-1,0,0,,,-3,0.1", true},      // negative parallax
		{"mock-1,0,0,,,0.5,1e-300", true},  // tiny but positive uncertainty
		{"mock-1,0,0,,,0.5,1e-400", false}, // rounds to zero
		{"mock-1,0,0,,,+inf,1", false},
		{"mock-1,0,0,,,1_000,1", false},
		{"mock-1,0,0,,,.5,1.", true},
		{"mock-1,0:0,0,,,0.5,0.1", true},
		{"mock-1,0:,0,,,0.5,0.1", false},
		{"mock-1,12h 30m 15s,0,,,0.5,0.1", true},
		{"mock-1,12h,0,,,0.5,0.1", true},
		{"mock-1,12 30 15 10,0,,,0.5,0.1", false},
		{"mock-1,12h30m15s10,0,,,0.5,0.1", false},
		{"mock-1,0,-00 00 01,,,0.5,0.1", true},
		{"mock-1,0,--5:00,,,0.5,0.1", false},
	} {
		_, err := Read(strings.NewReader(head+tc.text), "t.csv")
		if (err == nil) != tc.ok {
			t.Errorf("%q: error %v, want ok=%v", tc.text, err, tc.ok)
		}
	}
}
