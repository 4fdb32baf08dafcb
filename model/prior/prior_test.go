package prior

import (
	"encoding/json"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/gonum/integrate/quad"
)

// referenceFile holds values computed with scipy.stats by
// testdata/config/reference/priors_scipy.py (see that script for the mapping
// of each prior to its scipy.stats distribution).
var referenceFile = filepath.Join("..", "..", "testdata", "config", "reference", "priors_scipy.json")

type scipyPrior struct {
	Expr   string     `json:"expr"`
	X      []float64  `json:"x"`
	LogPDF []*float64 `json:"logpdf"` // null where scipy gives −inf
	CDF    []float64  `json:"cdf"`
	P      []float64  `json:"p"`
	PPF    []float64  `json:"ppf"`
	Mean   float64    `json:"mean"`
	Std    float64    `json:"std"`
	Median float64    `json:"median"`
}

type scipyReference struct {
	Priors    []scipyPrior `json:"priors"`
	Dirichlet []struct {
		Alpha  float64   `json:"alpha"`
		X      []float64 `json:"x"`
		LogPDF float64   `json:"logpdf"`
	} `json:"dirichlet"`
	Trigamma []struct {
		X     float64 `json:"x"`
		Value float64 `json:"value"`
	} `json:"trigamma"`
}

func loadReference(t *testing.T) scipyReference {
	t.Helper()
	data, err := os.ReadFile(referenceFile)
	if err != nil {
		t.Fatalf("reading reference values: %v", err)
	}
	var ref scipyReference
	if err := json.Unmarshal(data, &ref); err != nil {
		t.Fatalf("decoding %s: %v", referenceFile, err)
	}
	if len(ref.Priors) == 0 || len(ref.Dirichlet) == 0 || len(ref.Trigamma) == 0 {
		t.Fatalf("%s holds no reference values", referenceFile)
	}
	return ref
}

// close reports whether got is within tol of want, relative to max(1, |want|).
func close(got, want, tol float64) bool {
	if math.IsInf(want, 0) || math.IsInf(got, 0) {
		return got == want
	}
	return math.Abs(got-want) <= tol*math.Max(1, math.Abs(want))
}

// TestAgainstSciPy compares LogProb, CDF, Quantile, Spread and the median of
// every prior with scipy.stats (reference file above).
func TestAgainstSciPy(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.Priors {
		p, err := Parse(c.Expr)
		if err != nil {
			t.Errorf("Parse(%q): %v", c.Expr, err)
			continue
		}
		for i, x := range c.X {
			want := math.Inf(-1)
			if c.LogPDF[i] != nil {
				want = *c.LogPDF[i]
			}
			if got := p.LogProb(x); !close(got, want, 1e-12) {
				t.Errorf("%s: LogProb(%g) = %.17g, scipy %.17g", c.Expr, x, got, want)
			}
			if got := p.CDF(x); math.Abs(got-c.CDF[i]) > 1e-12 {
				t.Errorf("%s: CDF(%g) = %.17g, scipy %.17g", c.Expr, x, got, c.CDF[i])
			}
		}
		for i, q := range c.P {
			// scipy's truncnorm.ppf is itself accurate to about 1e-10 in the
			// far tails, hence the looser tolerance.
			if got := p.Quantile(q); !close(got, c.PPF[i], 1e-9) {
				t.Errorf("%s: Quantile(%g) = %.17g, scipy %.17g", c.Expr, q, got, c.PPF[i])
			}
		}
		if got := p.Spread(); !close(got, c.Std, 1e-9) {
			t.Errorf("%s: Spread = %.17g, scipy std %.17g", c.Expr, got, c.Std)
		}
		if got := Median(p); !close(got, c.Median, 1e-9) {
			t.Errorf("%s: Median = %.17g, scipy %.17g", c.Expr, got, c.Median)
		}
	}
}

// integrate returns ∫ exp(LogProb) over [a, b] with 20-point Gauss–Legendre
// rules on n panels, equally spaced in ln x when geometric is set.
func integrate(p Prior, a, b float64, n int, geometric bool) float64 {
	f := func(x float64) float64 { return math.Exp(p.LogProb(x)) }
	sum := 0.0
	for i := 0; i < n; i++ {
		var lo, hi float64
		if geometric {
			lo = a * math.Pow(b/a, float64(i)/float64(n))
			hi = a * math.Pow(b/a, float64(i+1)/float64(n))
		} else {
			lo = a + (b-a)*float64(i)/float64(n)
			hi = a + (b-a)*float64(i+1)/float64(n)
		}
		sum += quad.Fixed(f, lo, hi, 20, quad.Legendre{}, 0)
	}
	return sum
}

// TestDensitiesIntegrateToOne checks the normalisation of every density by
// numerical quadrature over its support (±40 sigma for the normal).
func TestDensitiesIntegrateToOne(t *testing.T) {
	for _, expr := range []string{
		"uniform(5, 12)", "uniform(-1e-3, 2e-3)",
		"normal(8.2, 0.4)", "normal(-5, 10)",
		"truncnormal(8.2, 0.4, 6, 10)", "truncnormal(0, 1, 5, 9)", "truncnormal(0, 1, 20, 21)",
		"truncnormal(10, 2, -3, 1)", "truncnormal(0, 10, -30, 12)",
		"loguniform(0.05, 1)", "loguniform(0.001, 1000)",
	} {
		p := MustParse(expr)
		a, b := p.Support()
		if math.IsInf(a, 0) || math.IsInf(b, 0) {
			m, s := Median(p), p.Spread()
			a, b = m-40*s, m+40*s
		}
		_, geometric := p.(LogUniform)
		got := integrate(p, a, b, 200, geometric)
		if math.Abs(got-1) > 1e-10 {
			t.Errorf("%s integrates to %.15g over [%g, %g]", expr, got, a, b)
		}
		// The CDF is the integral of the density (definition).
		x := p.Quantile(0.3)
		if c := integrate(p, a, x, 200, geometric); math.Abs(c-p.CDF(x)) > 1e-10 {
			t.Errorf("%s: ∫ density up to %g = %.15g, CDF %.15g", expr, x, c, p.CDF(x))
		}
	}
}

// TestQuantileInvertsCDF checks CDF(Quantile(p)) = p over the whole range of p.
func TestQuantileInvertsCDF(t *testing.T) {
	probs := []float64{1e-12, 1e-6, 0.01, 0.2, 0.5, 0.77, 0.99, 1 - 1e-6, 1 - 1e-12}
	for _, expr := range []string{
		"uniform(-30, 30)", "normal(12, 10)", "truncnormal(8.2, 0.4, 6, 10)",
		"truncnormal(0, 1, 5, 9)", "truncnormal(0, 1, -9, -5)", "truncnormal(0, 5, 0, 100)",
		"loguniform(0.05, 1.5)",
	} {
		p := MustParse(expr)
		for _, q := range probs {
			x := p.Quantile(q)
			lo, hi := p.Support()
			if x < lo || x > hi {
				t.Errorf("%s: Quantile(%g) = %g outside the support", expr, q, x)
			}
			if got := p.CDF(x); math.Abs(got-q) > 1e-9*math.Max(q, 1e-3) {
				t.Errorf("%s: CDF(Quantile(%g)) = %.17g", expr, q, got)
			}
		}
		for _, q := range []float64{-0.1, 1.1, math.NaN()} {
			if x := p.Quantile(q); !math.IsNaN(x) {
				t.Errorf("%s: Quantile(%g) = %g, want NaN", expr, q, x)
			}
		}
	}
}

// TestRandMoments checks draws against the scipy.stats mean and standard
// deviation. The draws are independent, so the effective sample size is the
// number of draws n; the tolerance is 5 standard errors, the standard error of
// the variance taken from the sample's fourth central moment (Cramér 1946,
// Mathematical Methods of Statistics, §27.4, from memory).
func TestRandMoments(t *testing.T) {
	ref := loadReference(t)
	const n = 40000
	src := rand.NewPCG(20240611, 7)
	for _, c := range ref.Priors {
		p := MustParse(c.Expr)
		lo, hi := p.Support()
		var s1 float64
		xs := make([]float64, n)
		for i := range xs {
			x := p.Rand(src)
			if x < lo || x > hi || math.IsNaN(x) {
				t.Fatalf("%s: draw %g outside the support", c.Expr, x)
			}
			xs[i] = x
			s1 += x
		}
		mean := s1 / n
		var m2, m4 float64
		for _, x := range xs {
			d := (x - mean) * (x - mean)
			m2 += d
			m4 += d * d
		}
		m2 /= n
		m4 /= n
		if se := c.Std / math.Sqrt(n); math.Abs(mean-c.Mean) > 5*se {
			t.Errorf("%s: mean of draws %g, scipy %g (5 s.e. = %g)", c.Expr, mean, c.Mean, 5*se)
		}
		if se := math.Sqrt((m4 - m2*m2) / n); math.Abs(m2-c.Std*c.Std) > 5*se {
			t.Errorf("%s: variance of draws %g, scipy %g (5 s.e. = %g)", c.Expr, m2, c.Std*c.Std, 5*se)
		}
	}
}

// TestFixed checks the point mass against its definition.
func TestFixed(t *testing.T) {
	f := MustParse("fixed(2.5)")
	if !f.IsFixed() || f.Spread() != 0 {
		t.Fatalf("fixed(2.5): IsFixed %v, Spread %g", f.IsFixed(), f.Spread())
	}
	if f.LogProb(2.5) != 0 || !math.IsInf(f.LogProb(2.5000001), -1) {
		t.Errorf("fixed(2.5): LogProb(2.5) = %g, LogProb(2.5000001) = %g", f.LogProb(2.5), f.LogProb(2.5000001))
	}
	if f.CDF(2.4) != 0 || f.CDF(2.5) != 1 || f.Quantile(0.1) != 2.5 || f.Rand(nil) != 2.5 {
		t.Errorf("fixed(2.5): CDF/Quantile/Rand disagree with a point mass at 2.5")
	}
	if lo, hi := f.Support(); lo != 2.5 || hi != 2.5 {
		t.Errorf("fixed(2.5): support [%g, %g]", lo, hi)
	}
	for _, expr := range []string{"uniform(0, 1)", "normal(0, 1)", "truncnormal(0, 1, -1, 1)", "loguniform(1, 2)"} {
		if MustParse(expr).IsFixed() {
			t.Errorf("%s reports IsFixed", expr)
		}
	}
}

// TestParseForms checks the accepted spellings of prior expressions.
func TestParseForms(t *testing.T) {
	for _, c := range []struct {
		expr string
		want Prior
	}{
		{"fixed(0)", Fixed{0}},
		{"0", Fixed{0}},
		{" -3.5e-2 ", Fixed{-0.035}},
		{"uniform(5, 12)", Uniform{5, 12}},
		{"Uniform( 5 ,12 )", Uniform{5, 12}},
		{"normal(8.2, 0.4)", Normal{8.2, 0.4}},
		{"NORMAL(-5,10)", Normal{-5, 10}},
		{"truncnormal(8.2, 0.4, 6, 10)", TruncNormal{8.2, 0.4, 6, 10}},
		{"loguniform(0.05, 1)", LogUniform{0.05, 1}},
		{"loguniform(5e-2, 1.5)", LogUniform{0.05, 1.5}},
	} {
		got, err := Parse(c.expr)
		if err != nil {
			t.Errorf("Parse(%q): %v", c.expr, err)
			continue
		}
		if got != c.want {
			t.Errorf("Parse(%q) = %#v, want %#v", c.expr, got, c.want)
		}
	}
}

// TestParseErrors checks that impossible priors are refused with a message that
// quotes the expression and says what is wrong.
func TestParseErrors(t *testing.T) {
	for _, c := range []struct{ expr, want string }{
		{"", "empty expression"},
		{"   ", "empty expression"},
		{"normal(8.2, 0)", "sigma = 0 must be positive"},
		{"normal(8.2, -0.4)", "sigma = -0.4 must be positive"},
		{"truncnormal(8.2, 0, 6, 10)", "sigma = 0 must be positive"},
		{"uniform(12, 5)", "min = 12 must be below max = 5"},
		{"uniform(5, 5)", "min = 5 must be below max = 5"},
		{"truncnormal(8, 1, 10, 6)", "min = 10 must be below max = 6"},
		{"loguniform(0, 1)", "min = 0 must be positive"},
		{"loguniform(-1, 1)", "min = -1 must be positive"},
		{"loguniform(2, 1)", "min = 2 must be below max = 1"},
		{"normal(NaN, 1)", `mu = "NaN" is not a finite number`},
		{"uniform(0, inf)", `max = "inf" is not a finite number`},
		{"uniform(0, 1e999)", `max = "1e999" is not a finite number`},
		{"inf", "finite"},
		{"normal(1)", "normal takes 2 arguments (mu, sigma), got 1"},
		{"normal(1, 2, 3)", "normal takes 2 arguments (mu, sigma), got 3"},
		{"fixed()", "fixed takes 1 argument (value), got 0"},
		{"truncnormal(0, 1, 2)", "truncnormal takes 4 arguments (mu, sigma, min, max), got 3"},
		{"gauss(0, 1)", `unknown distribution "gauss"`},
		{"uniform(1, 2", "missing closing parenthesis"},
		{"uniform(a, 2)", `min = "a" is not a number`},
		{"uniform(1, )", `max = "" is not a number`},
		{"normal((1), 2)", "unexpected parenthesis"},
		{"about eight", "neither a number nor an expression"},
		{"truncnormal(0, 1, 50, 60)", "no probability in double precision"},
	} {
		_, err := Parse(c.expr)
		if err == nil {
			t.Errorf("Parse(%q) accepted an impossible prior", c.expr)
			continue
		}
		msg := err.Error()
		if !strings.Contains(msg, c.want) {
			t.Errorf("Parse(%q): error %q does not say %q", c.expr, msg, c.want)
		}
		if !strings.Contains(msg, `"`+c.expr+`"`) {
			t.Errorf("Parse(%q): error %q does not show the expression", c.expr, msg)
		}
	}
}

// TestStringRoundTrip checks that Parse(p.String()) gives back p exactly, for
// random arguments of every distribution.
func TestStringRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(3, 4))
	num := func() float64 { return (r.Float64() - 0.3) * math.Pow(10, float64(r.IntN(12)-6)) }
	pos := func() float64 { return r.Float64() * math.Pow(10, float64(r.IntN(12)-6)) }
	for i := 0; i < 2000; i++ {
		a := num()
		var p Prior
		switch i % 5 {
		case 0:
			p = Fixed{a}
		case 1:
			p = Uniform{a, a + pos() + 1e-3}
		case 2:
			p = Normal{a, pos() + 1e-9}
		case 3:
			s := pos() + 1e-3
			p = TruncNormal{a, s, a - s*r.Float64(), a + s*r.Float64() + 1e-3*s}
		case 4:
			lo := pos() + 1e-9
			p = LogUniform{lo, lo * (1 + 10*r.Float64() + 1e-6)}
		}
		if err := p.Validate(); err != nil {
			t.Fatalf("%#v: %v", p, err)
		}
		q, err := Parse(p.String())
		if err != nil {
			t.Fatalf("Parse(%q): %v", p.String(), err)
		}
		if q != p {
			t.Fatalf("Parse(%q) = %#v, want %#v", p.String(), q, p)
		}
	}
}
