package model

import (
	"fmt"
	"math"
)

// ErrorKind names the distribution of the kinematic residuals, as written in
// configuration files.
type ErrorKind string

// The error models of the kinematic residuals.
const (
	// ErrorsGaussian is N(r; 0, σ).
	ErrorsGaussian ErrorKind = "gaussian"
	// ErrorsTolerant is the conservative formulation of Sivia & Skilling (2006, Data
	// Analysis: A Bayesian Tutorial, §8.3), which lets a few wild residuals pass without
	// dragging the fit.
	ErrorsTolerant ErrorKind = "tolerant"
	// ErrorsStudent is Student's t with a given number of degrees of freedom ν.
	ErrorsStudent ErrorKind = "student"
)

var halfLog2Pi = 0.5 * math.Log(2*math.Pi)

// ErrorModel is the probability density of a residual r = observed − predicted with
// effective uncertainty σ. Build it with NewErrorModel.
type ErrorModel struct {
	kind ErrorKind
	dof  float64
	// Student-t constants: ln Γ((ν+1)/2) − ln Γ(ν/2) − ½ ln(νπ) and (ν+1)/2.
	tNorm, tPow float64
}

// NewErrorModel returns the error model of the given kind: "gaussian", "tolerant" or
// "student" (with dof degrees of freedom, ν > 0; ignored otherwise).
func NewErrorModel(kind ErrorKind, dof float64) (ErrorModel, error) {
	e := ErrorModel{kind: kind}
	switch kind {
	case ErrorsGaussian, ErrorsTolerant:
	case ErrorsStudent:
		if !(dof > 0) || math.IsInf(dof, 0) {
			return e, fmt.Errorf("model: Student-t error model needs ν > 0, got %g", dof)
		}
		e.dof = dof
		a, _ := math.Lgamma((dof + 1) / 2)
		b, _ := math.Lgamma(dof / 2)
		e.tNorm = a - b - 0.5*math.Log(dof*math.Pi)
		e.tPow = (dof + 1) / 2
	default:
		return e, fmt.Errorf("model: unknown error model %q (want %s, %s or %s)", kind, ErrorsGaussian, ErrorsTolerant, ErrorsStudent)
	}
	return e, nil
}

// Kind returns the model's name.
func (e ErrorModel) Kind() ErrorKind { return e.kind }

// DOF returns ν of the Student-t model (0 for the others).
func (e ErrorModel) DOF() float64 { return e.dof }

// LogDensity returns ln p(r | σ) for a residual r with variance σ² = variance, normalised
// over r:
//
//   - gaussian: N(r; 0, σ);
//   - tolerant: p(r) = (1 − exp(−R²/2)) / (R² σ √(2π)), R = r/σ, whose limit at R → 0 is
//     1/(2σ√(2π)) — the conservative formulation of Sivia & Skilling 2006, Data Analysis: A
//     Bayesian Tutorial, 2nd ed., §8.3, for an uncertainty σ that is only a lower bound;
//   - student: the Student-t density with ν degrees of freedom and scale σ.
func (e *ErrorModel) LogDensity(r, variance float64) float64 {
	return e.logKernel(r*r/variance) - 0.5*math.Log(variance) - halfLog2Pi
}

// logKernel is ln p less its normalisation −ln σ − ½ ln 2π, as a function of z² = (r/σ)².
func (e *ErrorModel) logKernel(z2 float64) float64 {
	switch e.kind {
	case ErrorsTolerant:
		if z2 < 1e-8 {
			return math.Log(0.5 - z2/8) // (1 − exp(−z²/2)) / z² near 0
		}
		return math.Log(-math.Expm1(-0.5*z2) / z2)
	case ErrorsStudent:
		return e.tNorm + halfLog2Pi - e.tPow*math.Log1p(z2/e.dof)
	default:
		return -0.5 * z2
	}
}
