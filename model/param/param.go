// Package param names the parameters of the model: the global parameters, those of each
// spiral arm, the membership fractions and the derived quantities. The names are the ones
// used in configuration files, parameter files, chain columns and summaries.
//
// The package imports only the standard library, so that every other package of the model,
// the configuration reader and the command line can share one set of names.
package param

import (
	"strconv"
	"strings"
)

// Names of the global parameters.
const (
	R0         = "R0"          // kpc, distance of the Sun from the Galactic centre
	Theta0     = "Theta0"      // km/s, circular speed at R0 (derived for a nodes curve)
	DThetaDR   = "dTheta_dR"   // km/s/kpc, slope of a linear rotation curve
	Alpha      = "alpha"       // exponent of a power-law rotation curve
	Usun       = "Usun"        // km/s, the Sun's peculiar motion toward the centre
	Vsun       = "Vsun"        // km/s, the Sun's peculiar motion along rotation
	Wsun       = "Wsun"        // km/s, the Sun's peculiar motion toward the north pole
	Us         = "Us"          // km/s, the sources' mean peculiar motion toward the centre
	Vs         = "Vs"          // km/s, the sources' mean peculiar motion along rotation
	Ws         = "Ws"          // km/s, the sources' mean peculiar motion toward the north pole
	SigmaVir   = "sigma_vir"   // km/s, the sources' velocity dispersion
	WidthSlope = "width_slope" // kpc/kpc, growth of the arms' widths with radius
	// ScaleHeight and ZSun are parameters only of a model with vertical structure.
	ScaleHeight = "scale_height" // kpc, Gaussian scale height of the sources' layer
	ZSun        = "z_sun"        // kpc, the Sun's height above the layer's mid-plane
)

// Names of the derived quantities (besides Theta0 of a nodes curve and NAME_Rsun).
const (
	OmegaSun      = "Omega_sun"        // km/s/kpc, (Theta0 + Vsun)/R0
	ThetaOverR0   = "Theta0_over_R0"   // km/s/kpc
	ThetaPlusVsun = "Theta0_plus_Vsun" // km/s
	OortA         = "Oort_A"           // km/s/kpc
	OortB         = "Oort_B"           // km/s/kpc
)

// Suffixes of the per-arm names NAME_suffix.
const (
	SuffixRref   = "_Rref"   // kpc, the arm's radius at its reference azimuth
	SuffixPitch  = "_pitch"  // deg, pitch angle (below the kink)
	SuffixPitch2 = "_pitch2" // deg, pitch angle beyond the kink
	SuffixKink   = "_kink"   // deg, azimuth of the kink
	SuffixWidth  = "_width"  // kpc, Gaussian width at R0
	SuffixRsun   = "_Rsun"   // kpc, derived: where the arm crosses the Sun–centre line
)

// FieldComponent is the label of the field, membership component 0.
const FieldComponent = "field"

// fractionPrefix starts the name of a membership fraction.
const fractionPrefix = "f_"

// FieldFraction is the name of the field's membership fraction.
const FieldFraction = fractionPrefix + FieldComponent

// FractionName returns the name of the membership fraction of a component: "f_field" for
// the field, "f_" + the arm's name for an arm.
func FractionName(component string) string { return fractionPrefix + component }

// NodeName returns the name of the speed at the j-th node of a nodes rotation curve,
// counted from 1: "Theta_1", "Theta_2" …
func NodeName(j int) string { return "Theta_" + strconv.Itoa(j) }

// IsNodeName reports whether name is the name of a nodes-curve speed, "Theta_j" with j ≥ 1
// written without leading zeros.
func IsNodeName(name string) bool {
	s, ok := strings.CutPrefix(name, "Theta_")
	if !ok || s == "" || s[0] == '0' {
		return false
	}
	j, err := strconv.Atoi(s)
	return err == nil && j >= 1 && NodeName(j) == name
}

// StickName returns the name of the k-th unconstrained real (counted from 1) of the
// membership fractions' stick-breaking transform, as sampled coordinates and chain columns
// call it: "stick_1", "stick_2" … These are not parameters of the model.
func StickName(k int) string { return "stick_" + strconv.Itoa(k) }

// IsStickName reports whether name is a StickName.
func IsStickName(name string) bool {
	s, ok := strings.CutPrefix(name, "stick_")
	if !ok || s == "" || s[0] == '0' {
		return false
	}
	k, err := strconv.Atoi(s)
	return err == nil && k >= 1 && StickName(k) == name
}
