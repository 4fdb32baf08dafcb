package param

import (
	"strconv"
	"strings"
)

// Kind is the part a parameter plays in the model.
type Kind int

// The kinds of parameter.
const (
	// Global is a parameter of the whole Galaxy: R0, the rotation curve, the motions of the
	// Sun and the sources, their dispersion, the growth of the arms' widths.
	Global Kind = iota + 1
	// Arm is a parameter of one spiral arm, named NAME_suffix after the arm.
	Arm
	// Fraction is the membership fraction of the field or of one arm, f_field or f_NAME.
	Fraction
	// Derived is a quantity computed from the parameters, reported in summaries and open
	// to a prior; it is not sampled.
	Derived
)

// String returns "global", "arm", "fraction" or "derived".
func (k Kind) String() string {
	switch k {
	case Global:
		return "global"
	case Arm:
		return "arm"
	case Fraction:
		return "fraction"
	case Derived:
		return "derived"
	}
	return "Kind(" + strconv.Itoa(int(k)) + ")"
}

// form says how an Entry's name is matched.
type form int

const (
	exact    form = iota // the name itself
	node                 // Theta_j
	perArm               // NAME + suffix
	fraction             // f_ + component
)

// Entry is one row of the parameter table: a name, or a family of names (the speeds of a
// nodes curve, a parameter of every arm, the fractions of the arms), with its unit, kind
// and meaning.
type Entry struct {
	// Name is the name as written in help: NAME stands for an arm's name and j for the
	// number of a node, counted from 1.
	Name string
	// Unit is the unit of the values ("" for a pure number).
	Unit string
	// Kind is the part the parameter plays.
	Kind Kind
	// Description says what the parameter is, in a line.
	Description string
	// Vertical marks the parameters of the sources' vertical layer, which a model has only
	// when it has vertical structure.
	Vertical bool

	form form
	key  string // the name, the suffix of an arm's parameter, or "" for a fraction
}

// NodePattern is the Name of the table's row for the speeds of a nodes curve.
const NodePattern = "Theta_j"

// table is the one list of the model's parameters and derived quantities, in the order
// of parameter files, chains and summaries.
var table = []Entry{
	{Name: R0, Unit: "kpc", Kind: Global, Description: "distance of the Sun from the Galactic centre"},
	{Name: Theta0, Unit: "km/s", Kind: Global, Description: "circular speed at R0; derived for the nodes curve"},
	{Name: DThetaDR, Unit: "km/s/kpc", Kind: Global, Description: "slope of the linear rotation curve"},
	{Name: Alpha, Kind: Global, Description: "exponent of the power-law rotation curve"},
	{Name: NodePattern, Unit: "km/s", Kind: Global, Description: "speed at the j-th node radius of the nodes curve", form: node},
	{Name: Usun, Unit: "km/s", Kind: Global, Description: "the Sun's peculiar motion toward the Galactic centre"},
	{Name: Vsun, Unit: "km/s", Kind: Global, Description: "the Sun's peculiar motion along rotation (beyond Theta0)"},
	{Name: Wsun, Unit: "km/s", Kind: Global, Description: "the Sun's peculiar motion toward the north Galactic pole"},
	{Name: Us, Unit: "km/s", Kind: Global, Description: "the sources' mean peculiar motion toward the centre"},
	{Name: Vs, Unit: "km/s", Kind: Global, Description: "the sources' mean peculiar motion along rotation"},
	{Name: Ws, Unit: "km/s", Kind: Global, Description: "the sources' mean peculiar motion toward the north pole"},
	{Name: SigmaVir, Unit: "km/s", Kind: Global, Description: "the sources' velocity scatter about that mean"},
	{Name: WidthSlope, Unit: "kpc/kpc", Kind: Global, Description: "growth of the arms' widths with radius"},
	{Name: ScaleHeight, Unit: "kpc", Kind: Global, Description: "scale height of the sources' Gaussian layer", Vertical: true},
	{Name: ZSun, Unit: "kpc", Kind: Global, Description: "the Sun's height above the layer's mid-plane", Vertical: true},
	{Name: "NAME" + SuffixRref, Unit: "kpc", Kind: Arm, Description: "radius of arm NAME at its reference azimuth", form: perArm, key: SuffixRref},
	{Name: "NAME" + SuffixPitch, Unit: "deg", Kind: Arm, Description: "its pitch angle (below the kink, for a kinked arm)", form: perArm, key: SuffixPitch},
	{Name: "NAME" + SuffixPitch2, Unit: "deg", Kind: Arm, Description: "its pitch angle beyond the kink", form: perArm, key: SuffixPitch2},
	{Name: "NAME" + SuffixKink, Unit: "deg", Kind: Arm, Description: "the azimuth of its kink", form: perArm, key: SuffixKink},
	{Name: "NAME" + SuffixWidth, Unit: "kpc", Kind: Arm, Description: "its width at R0", form: perArm, key: SuffixWidth},
	{Name: FieldFraction, Kind: Fraction, Description: "membership fraction of the field", form: fraction, key: FieldComponent},
	{Name: fractionPrefix + "NAME", Kind: Fraction, Description: "membership fraction of arm NAME", form: fraction},
	{Name: OmegaSun, Unit: "km/s/kpc", Kind: Derived, Description: "the Sun's angular speed, (Theta0 + Vsun)/R0"},
	{Name: ThetaOverR0, Unit: "km/s/kpc", Kind: Derived, Description: "Theta0/R0"},
	{Name: ThetaPlusVsun, Unit: "km/s", Kind: Derived, Description: "Theta0 + Vsun"},
	{Name: OortA, Unit: "km/s/kpc", Kind: Derived, Description: "Oort's constant A at R0"},
	{Name: OortB, Unit: "km/s/kpc", Kind: Derived, Description: "Oort's constant B at R0"},
	{Name: "NAME" + SuffixRsun, Unit: "kpc", Kind: Derived, Description: "where arm NAME crosses the Sun–centre line nearest the Sun", form: perArm, key: SuffixRsun},
}

// Table returns the rows of the parameter table, in the order of parameter files, chains
// and summaries.
func Table() []Entry { return append([]Entry(nil), table...) }

// Info is what the table says of one name of a particular model.
type Info struct {
	Entry
	// Arm is the arm the name belongs to: that of an arm parameter, an arm's fraction or
	// NAME_Rsun; "" otherwise.
	Arm string
	// Node is j of a nodes-curve speed Theta_j, 0 otherwise.
	Node int
}

// Lookup returns the row of the table that name belongs to in a model with the given arm
// names, and whether there is one. Arm parameters and fractions are recognised only for
// those arms, so that "f_pitch" is the pitch angle of an arm named "f" and not a fraction
// when the model has such an arm and no arm named "pitch". Theta0 is looked up as a global
// parameter; for the nodes curve it is derived (see DerivedNames).
func Lookup(name string, arms []string) (Info, bool) {
	for _, e := range table {
		switch e.form {
		case exact:
			if name == e.Name {
				return Info{Entry: e}, true
			}
		case node:
			if IsNodeName(name) {
				j, _ := strconv.Atoi(strings.TrimPrefix(name, "Theta_"))
				return Info{Entry: e, Node: j}, true
			}
		case perArm:
			for _, a := range arms {
				if name == a+e.key {
					return Info{Entry: e, Arm: a}, true
				}
			}
		case fraction:
			if e.key != "" {
				if name == FractionName(e.key) {
					return Info{Entry: e}, true
				}
				continue
			}
			for _, a := range arms {
				if name == FractionName(a) {
					return Info{Entry: e, Arm: a}, true
				}
			}
		}
	}
	return Info{}, false
}

// Unit returns the unit of a name in a model with the given arms, "" for a pure number or
// an unknown name.
func Unit(name string, arms []string) string {
	info, _ := Lookup(name, arms)
	return info.Unit
}

// Label returns name with its unit in parentheses, for axis labels: "R0 (kpc)"; just the
// name when it has no unit.
func Label(name string, arms []string) string {
	if u := Unit(name, arms); u != "" {
		return name + " (" + u + ")"
	}
	return name
}

// CouldBe reports whether name has the form of a model's name for some choice of arm
// names: a global or derived name, a node speed Theta_j, NAME_suffix of an arm parameter,
// or f_NAME of a fraction, with NAME not empty.
func CouldBe(name string) bool {
	for _, e := range table {
		switch e.form {
		case exact:
			if name == e.Name {
				return true
			}
		case node:
			if IsNodeName(name) {
				return true
			}
		case perArm:
			if a, ok := strings.CutSuffix(name, e.key); ok && a != "" {
				return true
			}
		case fraction:
			if a, ok := strings.CutPrefix(name, fractionPrefix); ok && a != "" {
				return true
			}
		}
	}
	return false
}

// ArmNames returns the names of an arm's parameters in the table's order: NAME_Rref,
// NAME_pitch, for a kinked arm NAME_pitch2 and NAME_kink, and NAME_width.
func ArmNames(arm string, kinked bool) []string {
	var names []string
	for _, e := range table {
		if e.Kind != Arm {
			continue
		}
		if !kinked && (e.key == SuffixPitch2 || e.key == SuffixKink) {
			continue
		}
		names = append(names, arm+e.key)
	}
	return names
}

// FractionNames returns the names of the membership fractions: f_field, then f_NAME for
// each arm in order.
func FractionNames(arms []string) []string {
	names := []string{FieldFraction}
	for _, a := range arms {
		names = append(names, FractionName(a))
	}
	return names
}

// DerivedNames returns the names of the derived quantities of a model with the given arms,
// in the table's order: Omega_sun, Theta0_over_R0, Theta0_plus_Vsun, Oort_A, Oort_B, then
// Theta0 if withTheta0 (for the nodes curve, where Theta0 is not a parameter), then
// NAME_Rsun for each arm.
func DerivedNames(withTheta0 bool, arms []string) []string {
	var names []string
	for _, e := range table {
		if e.Kind == Derived && e.form == exact {
			names = append(names, e.Name)
		}
	}
	if withTheta0 {
		names = append(names, Theta0)
	}
	for _, e := range table {
		if e.Kind == Derived && e.form == perArm {
			for _, a := range arms {
				names = append(names, a+e.key)
			}
		}
	}
	return names
}
