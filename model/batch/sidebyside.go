package batch

import (
	"fmt"
	"path/filepath"
	"strings"

	"github.com/mirabilis-astro/mirabilis/model/fit"
)

// SideBySide is the posterior of several runs of different models (the variants of a
// batch, say), each summarised on its own and set side by side.
type SideBySide struct {
	// Runs are the run directories, in the order given.
	Runs []string `json:"runs"`
	// Rows hold, for every parameter and derived quantity of any run, each run's
	// summary (nil where the run's model does not have it).
	Rows []SideBySideRow `json:"quantities"`
	// MaxTau is each run's longest autocorrelation time in steps, and Length its
	// chain after burn-in in steps.
	MaxTau []float64 `json:"max_tau"`
	Length []int     `json:"steps_after_burn"`
}

// SideBySideRow is one quantity across runs.
type SideBySideRow struct {
	Name string          `json:"name"`
	Runs []*fit.Quantity `json:"runs"`
}

// NewSideBySide summarises each run after burn (see fit.Run.Burn) and lines the
// quantities up, in the order they first appear.
func NewSideBySide(runs []*fit.Run, burn int) (*SideBySide, error) {
	out := &SideBySide{}
	index := map[string]int{}
	for k, r := range runs {
		s, err := r.Summary(burn)
		if err != nil {
			return nil, fmt.Errorf("%s: %w", r.Dir, err)
		}
		out.Runs = append(out.Runs, r.Dir)
		out.MaxTau = append(out.MaxTau, s.MaxTau)
		out.Length = append(out.Length, s.Steps-s.Burn)
		for _, list := range [][]fit.Quantity{s.Params, s.Derived} {
			for _, q := range list {
				i, ok := index[q.Name]
				if !ok {
					i = len(out.Rows)
					index[q.Name] = i
					out.Rows = append(out.Rows, SideBySideRow{Name: q.Name})
				}
				row := &out.Rows[i]
				for len(row.Runs) < len(runs) {
					row.Runs = append(row.Runs, nil)
				}
				row.Runs[k] = &q
			}
		}
	}
	for i := range out.Rows {
		for len(out.Rows[i].Runs) < len(runs) {
			out.Rows[i].Runs = append(out.Rows[i].Runs, nil)
		}
	}
	return out, nil
}

// Text renders the table: one column per run, each cell the median and the 68% interval.
func (s *SideBySide) Text() string {
	names := make([]string, len(s.Runs))
	for k, d := range s.Runs {
		names[k] = filepath.Base(filepath.Clean(d))
	}
	const cell = 28
	var b strings.Builder
	fmt.Fprintf(&b, "Each run summarised on its own: median [68%% interval]; – where a model lacks the quantity.\n\n")
	fmt.Fprintf(&b, "%-18s", "quantity")
	for _, n := range names {
		fmt.Fprintf(&b, "  %-*s", cell, n)
	}
	b.WriteString("\n")
	for _, r := range s.Rows {
		fmt.Fprintf(&b, "%-18s", r.Name)
		for _, q := range r.Runs {
			text := "–"
			if q != nil {
				text = fmt.Sprintf("%.4g [%.4g, %.4g]", q.Median, q.Lo68, q.Hi68)
			}
			fmt.Fprintf(&b, "  %-*s", cell, text)
		}
		b.WriteString("\n")
	}
	fmt.Fprintf(&b, "%-18s", "chain (τ)")
	for k := range s.Runs {
		fmt.Fprintf(&b, "  %-*s", cell, fmt.Sprintf("%d steps = %.1f τ", s.Length[k], float64(s.Length[k])/s.MaxTau[k]))
	}
	b.WriteString("\n\nWhich model the catalog prefers: mirabilis compare " + strings.Join(s.Runs, " ") + "\n")
	return b.String()
}
