package model

import (
	"bytes"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"

	"github.com/mirabilis-astro/mirabilis/internal/spelling"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

// CurveSettings holds what a parameter set does not: the rotation curve's family, the node
// radii of a nodes curve, its interpolant and the core radius. The zero value infers the
// family from the parameter names and uses DefaultCoreRadius.
type CurveSettings struct {
	// Family is the rotation-curve family. Empty: inferred from the parameter names,
	// dTheta_dR → CurveLinear, alpha → CurvePower, Theta_1 … → CurveNodes.
	Family CurveFamily
	// NodeRadii are the radii R_j (kpc, increasing) of a nodes curve; parameter Theta_j is
	// the speed at NodeRadii[j−1].
	NodeRadii []float64
	// Interp joins the nodes of a nodes curve; the zero value is MonotoneCubic.
	Interp Interpolation
	// RCore is the core radius R_core (kpc); 0 means DefaultCoreRadius.
	RCore float64
}

// MotionFromParams builds the Motion described by a flat set of parameter values keyed by
// name (R0, Theta0, dTheta_dR or alpha or Theta_1…Theta_N, Usun, Vsun, Wsun, Us, Vs, Ws) and
// the curve settings. It returns the Motion and the names it used, in a fixed order.
//
// Every name the chosen family needs must be present; an error names the first one missing.
// For a nodes curve Θ0 is derived (Θ(R0)), and a Theta0 value, if present, is not used.
// Other names are allowed if they are parameters of other parts of the model
// (IsModelParameterName: arm, width, dispersion, fraction and derived names); a name of a
// different rotation-curve family, a node beyond NodeRadii, or any other name is an error.
func MotionFromParams(values map[string]float64, cs CurveSettings) (*Motion, []string, error) {
	fam, err := curveFamilyOf(values, cs)
	if err != nil {
		return nil, nil, err
	}
	var used []string
	get := func(name string) (float64, error) {
		v, ok := values[name]
		if !ok {
			return 0, fmt.Errorf("parameter %s is missing (needed by the %s rotation curve and motion model)", name, fam)
		}
		if !isFiniteNumber(v) {
			return 0, fmt.Errorf("parameter %s = %v is not a finite number", name, v)
		}
		used = append(used, name)
		return v, nil
	}
	rCore := cs.RCore
	if rCore == 0 {
		rCore = DefaultCoreRadius
	}
	r0, err := get(param.R0)
	if err != nil {
		return nil, nil, err
	}
	var curve RotationCurve
	switch fam {
	case CurveLinear, CurvePower:
		th0, err := get(param.Theta0)
		if err != nil {
			return nil, nil, err
		}
		if fam == CurveLinear {
			slope, err := get(param.DThetaDR)
			if err != nil {
				return nil, nil, err
			}
			curve, err = NewLinearCurve(r0, th0, slope, rCore)
			if err != nil {
				return nil, nil, err
			}
		} else {
			alpha, err := get(param.Alpha)
			if err != nil {
				return nil, nil, err
			}
			curve, err = NewPowerCurve(r0, th0, alpha, rCore)
			if err != nil {
				return nil, nil, err
			}
		}
	case CurveNodes:
		if len(cs.NodeRadii) == 0 {
			return nil, nil, fmt.Errorf("nodes rotation curve: no node radii in the settings")
		}
		speeds := make([]float64, len(cs.NodeRadii))
		for j := range speeds {
			if speeds[j], err = get(param.NodeName(j + 1)); err != nil {
				return nil, nil, err
			}
		}
		curve, err = NewNodesCurve(cs.NodeRadii, speeds, cs.Interp, rCore)
		if err != nil {
			return nil, nil, err
		}
	}
	var uvw [6]float64
	for i, name := range []string{param.Usun, param.Vsun, param.Wsun, param.Us, param.Vs, param.Ws} {
		if uvw[i], err = get(name); err != nil {
			return nil, nil, err
		}
	}
	isUsed := make(map[string]bool, len(used))
	for _, name := range used {
		isUsed[name] = true
	}
	for name := range values {
		if isUsed[name] {
			continue
		}
		if err := checkUnusedParam(name, fam, len(cs.NodeRadii)); err != nil {
			return nil, nil, err
		}
	}
	m, err := NewMotion(r0, curve, UVW{uvw[0], uvw[1], uvw[2]}, UVW{uvw[3], uvw[4], uvw[5]})
	if err != nil {
		return nil, nil, err
	}
	return m, used, nil
}

// curveFamilyOf returns the family set in cs, or the one the parameter names point to.
func curveFamilyOf(values map[string]float64, cs CurveSettings) (CurveFamily, error) {
	switch cs.Family {
	case CurveLinear, CurvePower, CurveNodes:
		return cs.Family, nil
	case "":
	default:
		return "", fmt.Errorf("unknown rotation-curve family %q (want %q, %q or %q)", cs.Family, CurveLinear, CurvePower, CurveNodes)
	}
	var found []CurveFamily
	if _, ok := values[param.DThetaDR]; ok {
		found = append(found, CurveLinear)
	}
	if _, ok := values[param.Alpha]; ok {
		found = append(found, CurvePower)
	}
	if _, ok := values[param.NodeName(1)]; ok {
		found = append(found, CurveNodes)
	}
	switch len(found) {
	case 0:
		return "", fmt.Errorf("no rotation-curve parameter: want %s (linear), %s (power) or %s… (nodes)", param.DThetaDR, param.Alpha, param.NodeName(1))
	case 1:
		return found[0], nil
	}
	return "", fmt.Errorf("parameters of several rotation-curve families (%v): set the family", found)
}

// checkUnusedParam accepts a name the motion model did not use if it belongs to another part
// of the model and not to a rotation-curve family other than fam.
func checkUnusedParam(name string, fam CurveFamily, nNodes int) error {
	switch {
	case name == param.DThetaDR || name == param.Alpha:
		return fmt.Errorf("parameter %s does not belong to the %s rotation curve", name, fam)
	case param.IsNodeName(name):
		if fam != CurveNodes {
			return fmt.Errorf("parameter %s does not belong to the %s rotation curve", name, fam)
		}
		return fmt.Errorf("parameter %s: the nodes curve has only %d node radii", name, nNodes)
	case name == param.Theta0 && fam == CurveNodes:
		return nil // derived for a nodes curve
	case IsModelParameterName(name):
		return nil
	}
	if near := spelling.Nearest(name, GlobalNames(fam, nNodes, true)); near != "" {
		return fmt.Errorf("unknown parameter %q (did you mean %s?)", name, near)
	}
	return fmt.Errorf("unknown parameter %q", name)
}

// IsModelParameterName reports whether name has the form of a parameter or derived-quantity
// name of some model (see param.CouldBe): a global or derived name, a node speed Theta_j,
// NAME_suffix of an arm's parameter or f_NAME of a fraction.
func IsModelParameterName(name string) bool { return param.CouldBe(name) }

// GlobalNames returns the names of the global parameters of a model whose rotation curve is
// of family fam with nodes node radii, with vertical structure or not, in the order of the
// parameter table (param.Table): R0, the curve's parameters (Theta0 and dTheta_dR, Theta0
// and alpha, or Theta_1 … Theta_nodes), Usun, Vsun, Wsun, Us, Vs, Ws, sigma_vir,
// width_slope, and with vertical structure scale_height and z_sun.
func GlobalNames(fam CurveFamily, nodes int, vertical bool) []string {
	var names []string
	for _, e := range param.Table() {
		if e.Kind != param.Global || (e.Vertical && !vertical) {
			continue
		}
		switch e.Name {
		case param.NodePattern:
			if fam == CurveNodes {
				for j := 1; j <= nodes; j++ {
					names = append(names, param.NodeName(j))
				}
			}
		case param.Theta0:
			if fam == CurveLinear || fam == CurvePower {
				names = append(names, e.Name)
			}
		case param.DThetaDR:
			if fam == CurveLinear {
				names = append(names, e.Name)
			}
		case param.Alpha:
			if fam == CurvePower {
				names = append(names, e.Name)
			}
		default:
			names = append(names, e.Name)
		}
	}
	return names
}

// ReadParamValues reads a JSON file holding one object of parameter values keyed by name,
// for example {"R0": 8.2, "Theta0": 236, "dTheta_dR": -0.5, "Usun": 10.6, …}. Every value
// must be a number; a repeated name is an error.
func ReadParamValues(path string) (map[string]float64, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("reading parameter values: %w", err)
	}
	v, err := ParseParamValues(data)
	if err != nil {
		return nil, fmt.Errorf("reading parameter values from %s: %w", path, err)
	}
	return v, nil
}

// ParseParamValues parses a JSON object of parameter values keyed by name (see
// ReadParamValues).
func ParseParamValues(data []byte) (map[string]float64, error) {
	dec := json.NewDecoder(bytes.NewReader(data))
	dec.UseNumber()
	tok, err := dec.Token()
	if err != nil {
		return nil, fmt.Errorf("want a JSON object: %w", err)
	}
	if d, ok := tok.(json.Delim); !ok || d != '{' {
		return nil, fmt.Errorf("want a JSON object of name: value pairs, found %v", tok)
	}
	values := make(map[string]float64)
	for dec.More() {
		tok, err := dec.Token()
		if err != nil {
			return nil, fmt.Errorf("at byte %d: %w", dec.InputOffset(), err)
		}
		name, ok := tok.(string)
		if !ok {
			return nil, fmt.Errorf("at byte %d: want a parameter name, found %v", dec.InputOffset(), tok)
		}
		if _, dup := values[name]; dup {
			return nil, fmt.Errorf("parameter %q given twice", name)
		}
		tok, err = dec.Token()
		if err != nil {
			return nil, fmt.Errorf("parameter %q: %w", name, err)
		}
		num, ok := tok.(json.Number)
		if !ok {
			return nil, fmt.Errorf("parameter %q: want a number, found %v", name, describeJSON(tok))
		}
		f, err := num.Float64()
		if err != nil {
			return nil, fmt.Errorf("parameter %q: %w", name, err)
		}
		values[name] = f
	}
	if _, err := dec.Token(); err != nil {
		return nil, fmt.Errorf("unterminated JSON object: %w", err)
	}
	if _, err := dec.Token(); !errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("unexpected content after the JSON object")
	}
	return values, nil
}

func describeJSON(tok json.Token) string {
	switch t := tok.(type) {
	case string:
		return fmt.Sprintf("the string %q", t)
	case bool:
		return fmt.Sprintf("%v", t)
	case nil:
		return "null"
	case json.Delim:
		if t == '{' {
			return "an object"
		}
		return "an array"
	}
	return fmt.Sprintf("%v", tok)
}

// rCore returns the core radius with its default applied.
func (cs CurveSettings) rCore() float64 {
	if cs.RCore > 0 {
		return cs.RCore
	}
	return DefaultCoreRadius
}
