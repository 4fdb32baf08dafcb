package fit

import (
	"encoding/json"
	"fmt"
	"math"
	"os"
	"slices"

	"github.com/mirabilis-astro/mirabilis/model"
)

// pilotFile is the form of PilotResult in a run directory's pilot.json: snake_case keys
// and every value named by its sampled coordinate, as in summary.json.
type pilotFile struct {
	MAPLogDensity float64          `json:"map_log_density"`
	MAPConverged  bool             `json:"map_converged"`
	Coordinates   []pilotCoord     `json:"coordinates"`
	Pilots        []map[string]any `json:"pilot_points"`
	Quadrature    pilotQuadrature  `json:"quadrature"`
	Inner         []string         `json:"inner_sources"`
	Excluded      []string         `json:"excluded_sources"`
}

// pilotCoord is one sampled coordinate: its MAP value and expected posterior spread.
type pilotCoord struct {
	Name   string `json:"name"`
	MAP    any    `json:"map"`
	Spread any    `json:"spread"`
}

type pilotQuadrature struct {
	MinNodes    int      `json:"min_nodes"`
	MedianNodes int      `json:"median_nodes"`
	MaxNodes    int      `json:"max_nodes"`
	TotalNodes  int      `json:"total_nodes"`
	Unconverged []string `json:"unconverged_sources"`
	MaxError    any      `json:"max_error"`
}

// jsonFloat returns x, or nil (JSON null) when x is not finite.
func jsonFloat(x float64) any { return jsonSafe(x) }

// fromJSONFloat reads back a number written by jsonFloat; null is NaN.
func fromJSONFloat(v any) (float64, error) {
	switch x := v.(type) {
	case nil:
		return math.NaN(), nil
	case float64:
		return x, nil
	}
	return 0, fmt.Errorf("%v is not a number", v)
}

// file returns the pilot stage in the form of pilot.json.
func (p *PilotResult) file() *pilotFile {
	f := &pilotFile{MAPLogDensity: p.MAPLogDensity, MAPConverged: p.MAPConverged,
		Inner: nonNil(p.Inner), Excluded: nonNil(p.Excluded), Pilots: []map[string]any{}}
	for i, n := range p.Names {
		c := pilotCoord{Name: n}
		if i < len(p.MAP) {
			c.MAP = jsonFloat(p.MAP[i])
		}
		if i < len(p.Spread) {
			c.Spread = jsonFloat(p.Spread[i])
		}
		f.Coordinates = append(f.Coordinates, c)
	}
	for _, x := range p.Pilots {
		m := map[string]any{}
		for i, n := range p.Names {
			m[n] = jsonFloat(x[i])
		}
		f.Pilots = append(f.Pilots, m)
	}
	s := p.Stats
	f.Quadrature = pilotQuadrature{MinNodes: s.MinNodes, MedianNodes: s.MedianNodes, MaxNodes: s.MaxNodes,
		TotalNodes: s.TotalNodes, Unconverged: nonNil(s.Unconverged), MaxError: jsonFloat(s.MaxError)}
	return f
}

func nonNil(s []string) []string {
	if s == nil {
		return []string{}
	}
	return s
}

// writePilot writes the pilot stage to path as pilot.json.
func writePilot(path string, p *PilotResult) error { return writeJSON(path, p.file()) }

// readPilot reads a pilot.json written by writePilot; names are the sampled coordinates of
// the run's model, which the file must hold in that order.
func readPilot(path string, names []string) (*PilotResult, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, err
	}
	var f pilotFile
	if err := json.Unmarshal(data, &f); err != nil {
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	if f.Coordinates == nil && f.Pilots == nil {
		// Written by an earlier version, with Go's field names and unnamed arrays.
		p := &PilotResult{}
		if err := json.Unmarshal(data, p); err != nil {
			return nil, fmt.Errorf("%s: %w", path, err)
		}
		if len(p.MAP) != len(names) {
			return nil, fmt.Errorf("%s: %d coordinates, the model has %d", path, len(p.MAP), len(names))
		}
		p.Names = names
		return p, nil
	}
	p := &PilotResult{Names: names, MAPLogDensity: f.MAPLogDensity, MAPConverged: f.MAPConverged,
		Inner: f.Inner, Excluded: f.Excluded}
	var got []string
	for _, c := range f.Coordinates {
		got = append(got, c.Name)
		m, err := fromJSONFloat(c.MAP)
		if err != nil {
			return nil, fmt.Errorf("%s: coordinate %s: map: %w", path, c.Name, err)
		}
		s, err := fromJSONFloat(c.Spread)
		if err != nil {
			return nil, fmt.Errorf("%s: coordinate %s: spread: %w", path, c.Name, err)
		}
		p.MAP, p.Spread = append(p.MAP, m), append(p.Spread, s)
	}
	if !slices.Equal(got, names) {
		return nil, fmt.Errorf("%s: the coordinates %v are not those of the model, %v", path, got, names)
	}
	for k, m := range f.Pilots {
		x := make([]float64, len(names))
		for i, n := range names {
			v, err := fromJSONFloat(m[n])
			if err != nil {
				return nil, fmt.Errorf("%s: pilot point %d: %s: %w", path, k+1, n, err)
			}
			x[i] = v
		}
		p.Pilots = append(p.Pilots, x)
	}
	q := f.Quadrature
	maxErr, err := fromJSONFloat(q.MaxError)
	if err != nil {
		return nil, fmt.Errorf("%s: quadrature: max_error: %w", path, err)
	}
	p.Stats = model.LayoutStats{MinNodes: q.MinNodes, MedianNodes: q.MedianNodes, MaxNodes: q.MaxNodes,
		TotalNodes: q.TotalNodes, Unconverged: q.Unconverged, MaxError: maxErr}
	return p, nil
}
