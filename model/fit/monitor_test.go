package fit

import (
	"fmt"
	"strings"
	"testing"
)

// TestMonitorReport: the monitor warns only about what it measured above the tolerance,
// names the worst first, and warns about the whole catalog's ln L on its own.
func TestMonitorReport(t *testing.T) {
	name := func(i int) string { return fmt.Sprintf("src-%d", i) }
	c := &quadCheck{Sample: []int{0, 1, 2, 3}, Err: map[int]float64{0: 3e-5, 1: 2e-3, 2: 9e-5, 3: 4e-4}, Total: 0.01}
	if got := c.over(1e-4); fmt.Sprint(got) != "[1 3]" {
		t.Errorf("over 1e-4: %v, want [1 3]", got)
	}
	msg := c.report(500, 1e-4, name, "refined")
	if !strings.Contains(msg, "for 2 of 4 sources") || !strings.Contains(msg, "src-1 (2.0e-03), src-3 (4.0e-04)") ||
		strings.Contains(msg, "src-0") || strings.Contains(msg, "src-2") {
		t.Errorf("report: %q", msg)
	}
	c.Err[1], c.Err[3] = 5e-5, 1e-4
	if msg := c.report(500, 1e-4, name, "refined"); msg != "" {
		t.Errorf("everything within the tolerance, yet: %q", msg)
	}
	c.Total = 0.2
	if msg := c.report(500, 1e-4, name, "refined"); !strings.Contains(msg, "for 0 of 4 sources") || !strings.Contains(msg, "off by about 2.0e-01") {
		t.Errorf("whole catalog off by 0.2: %q", msg)
	}
}
