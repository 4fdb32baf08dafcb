// Package prior holds the prior distributions of the model parameters and the
// parser for the short prior expressions written in run configurations.
//
// Each distribution is a small value type in the manner of gonum's stat/distuv
// (Fixed, Uniform, Normal, TruncNormal, LogUniform) and satisfies Prior. A
// parameter's prior is written in a configuration as an expression such as
// "uniform(5, 12)" or "normal(8.2, 0.4)"; Parse reads one and the String method
// of every distribution writes one back, so that
//
//	p, _ := prior.Parse(q.String())
//
// gives p == q exactly (floats are printed with the shortest representation that
// reads back to the same value).
//
// The membership fractions of the mixture are not independent parameters: they
// lie on a simplex and have a symmetric Dirichlet prior. Dirichlet, together with
// FractionsFromReals and RealsFromFractions, maps them to and from unconstrained
// real coordinates with the Jacobian of the transform, so that an unconstrained
// sampler can explore them.
//
// Units are those of the parameter a prior belongs to; the package attaches no
// meaning to them.
package prior

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"strings"
)

// Prior is a one-dimensional prior distribution of a model parameter.
//
// LogProb is normalised over the real line (for Fixed, which is a point mass,
// it is 0 at the value), and −Inf outside the support. Quantile(0.5), the
// median, is the default starting value of a parameter; Spread, the standard
// deviation, sets the scale on which pilot parameter sets are laid out.
type Prior interface {
	// LogProb returns the natural logarithm of the probability density at x,
	// or −Inf where x is outside the support.
	LogProb(x float64) float64
	// CDF returns the probability that the parameter is at most x.
	CDF(x float64) float64
	// Quantile returns the value below which the fraction p of the prior
	// mass lies, the inverse of CDF. It returns NaN for p outside [0, 1].
	Quantile(p float64) float64
	// Rand returns a random draw using the random stream src (math/rand/v2's
	// global generator when src is nil, which is not reproducible).
	Rand(src rand.Source) float64
	// Support returns the smallest and largest possible values, ±Inf for an
	// unbounded side.
	Support() (min, max float64)
	// Spread returns the standard deviation of the distribution (0 for Fixed).
	Spread() float64
	// IsFixed reports whether the parameter is held fixed (not sampled).
	IsFixed() bool
	// Validate returns an error describing why the distribution is
	// impossible (for example a non-positive width), or nil.
	Validate() error
	// String returns the prior expression, in the syntax read by Parse.
	String() string
}

// Distribution names in prior expressions, as read by Parse.
const (
	NameFixed       = "fixed"
	NameUniform     = "uniform"
	NameNormal      = "normal"
	NameTruncNormal = "truncnormal"
	NameLogUniform  = "loguniform"
)

// arguments lists, for each distribution name, the names of its arguments in
// the order they are written.
var arguments = map[string][]string{
	NameFixed:       {"value"},
	NameUniform:     {"min", "max"},
	NameNormal:      {"mu", "sigma"},
	NameTruncNormal: {"mu", "sigma", "min", "max"},
	NameLogUniform:  {"min", "max"},
}

// Parse reads a prior expression. The accepted forms are
//
//	fixed(v)                  the parameter is held at v
//	v                         a bare number: the same as fixed(v)
//	uniform(a, b)             flat on [a, b], a < b
//	normal(mu, sigma)         Gaussian, sigma > 0
//	truncnormal(mu, sigma, a, b)  Gaussian restricted to [a, b]
//	loguniform(a, b)          flat in ln x on [a, b], 0 < a < b
//
// Names are case-insensitive and spaces are free. Every argument must be a
// finite number. The error for an impossible prior quotes the expression and
// says what is wrong with it.
func Parse(expr string) (Prior, error) {
	s := strings.TrimSpace(expr)
	if s == "" {
		return nil, fmt.Errorf("prior %q: empty expression (want for example \"uniform(5, 12)\" or a number)", expr)
	}
	if v, err := strconv.ParseFloat(s, 64); err == nil || isRangeError(err) {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("prior %q: the value must be a finite number", expr)
		}
		return Fixed{Value: v}, nil
	}
	open := strings.IndexByte(s, '(')
	if open < 0 {
		return nil, fmt.Errorf("prior %q: neither a number nor an expression of the form name(arguments); known names: %s", expr, knownNames())
	}
	if !strings.HasSuffix(s, ")") {
		return nil, fmt.Errorf("prior %q: missing closing parenthesis", expr)
	}
	name := strings.ToLower(strings.TrimSpace(s[:open]))
	want, ok := arguments[name]
	if !ok {
		return nil, fmt.Errorf("prior %q: unknown distribution %q; known names: %s", expr, s[:open], knownNames())
	}
	inner := s[open+1 : len(s)-1]
	if strings.ContainsAny(inner, "()") {
		return nil, fmt.Errorf("prior %q: unexpected parenthesis inside the argument list", expr)
	}
	var fields []string
	if strings.TrimSpace(inner) != "" {
		fields = strings.Split(inner, ",")
	}
	if len(fields) != len(want) {
		return nil, fmt.Errorf("prior %q: %s takes %d argument%s (%s), got %d",
			expr, name, len(want), plural(len(want)), strings.Join(want, ", "), len(fields))
	}
	args := make([]float64, len(fields))
	for i, f := range fields {
		f = strings.TrimSpace(f)
		v, err := strconv.ParseFloat(f, 64)
		if err != nil && !isRangeError(err) {
			return nil, fmt.Errorf("prior %q: %s = %q is not a number", expr, want[i], f)
		}
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("prior %q: %s = %q is not a finite number", expr, want[i], f)
		}
		args[i] = v
	}
	var p Prior
	switch name {
	case NameFixed:
		p = Fixed{Value: args[0]}
	case NameUniform:
		p = Uniform{Min: args[0], Max: args[1]}
	case NameNormal:
		p = Normal{Mu: args[0], Sigma: args[1]}
	case NameTruncNormal:
		p = TruncNormal{Mu: args[0], Sigma: args[1], Min: args[2], Max: args[3]}
	case NameLogUniform:
		p = LogUniform{Min: args[0], Max: args[1]}
	}
	if err := p.Validate(); err != nil {
		return nil, fmt.Errorf("prior %q: %w", expr, err)
	}
	return p, nil
}

// MustParse is like Parse but panics on error. It is meant for expressions
// written in program text, never for user input.
func MustParse(expr string) Prior {
	p, err := Parse(expr)
	if err != nil {
		panic(err)
	}
	return p
}

// Median returns the median of p, Quantile(0.5): the default starting value of
// a parameter (for a uniform prior, the midpoint of its range).
func Median(p Prior) float64 { return p.Quantile(0.5) }

func isRangeError(err error) bool {
	ne, ok := err.(*strconv.NumError)
	return ok && ne.Err == strconv.ErrRange
}

func knownNames() string {
	return strings.Join([]string{NameFixed, NameUniform, NameNormal, NameTruncNormal, NameLogUniform}, ", ")
}

func plural(n int) string {
	if n == 1 {
		return ""
	}
	return "s"
}

// formatNumber writes x with the fewest digits that read back to exactly x.
func formatNumber(x float64) string {
	return strconv.FormatFloat(x, 'g', -1, 64)
}

func expression(name string, args ...float64) string {
	parts := make([]string, len(args))
	for i, a := range args {
		parts[i] = formatNumber(a)
	}
	return name + "(" + strings.Join(parts, ", ") + ")"
}

func finite(x float64) bool { return !math.IsNaN(x) && !math.IsInf(x, 0) }

// checkFinite returns an error naming the first argument that is not finite.
func checkFinite(name string, values ...float64) error {
	for i, v := range values {
		if !finite(v) {
			return fmt.Errorf("%s: %s = %v is not a finite number", name, arguments[name][i], v)
		}
	}
	return nil
}
