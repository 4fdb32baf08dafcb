package catalog

import (
	"strings"
	"testing"
)

// TestHelpExample reads the example catalog of HelpText, so that the help
// shows a catalog the reader accepts.
func TestHelpExample(t *testing.T) {
	_, example, ok := strings.Cut(HelpText, "\nExample:\n")
	if !ok {
		t.Fatal("HelpText has no example")
	}
	var lines []string
	for _, l := range strings.Split(example, "\n") {
		lines = append(lines, strings.TrimPrefix(l, "  "))
	}
	cat, err := Read(strings.NewReader(strings.Join(lines, "\n")), "example.csv")
	if err != nil {
		t.Fatal(err)
	}
	// By hand: 18:03:12.4 = (18 + 3/60 + 12.4/3600) × 15 = 270.801666…°;
	// -21:40:05 = −(21 + 40/60 + 5/3600) = −21.668055…°.
	s := cat.Sources
	if len(s) != 3 || s[0].Name != "Corvid-7" || s[0].Arm != "Corvid" || s[1].Arm != "" ||
		s[2].Name != "Lantern, east knot" || s[2].Vel.OK || s[1].PM1.OK {
		t.Errorf("example read as %+v", s)
	}
	if d := s[0].Lon - 270.80166666666667; d > 1e-9 || d < -1e-9 {
		t.Errorf("ra %v", s[0].Lon)
	}
	if d := s[0].Lat + 21.668055555555556; d > 1e-9 || d < -1e-9 {
		t.Errorf("dec %v", s[0].Lat)
	}
}
