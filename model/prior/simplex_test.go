package prior

import (
	"math"
	"math/rand/v2"
	"testing"

	"gonum.org/v1/gonum/mat"
)

// TestSimplexJacobian checks ln |J| of FractionsFromReals against the
// determinant of a central finite-difference Jacobian of the map from y to the
// first N − 1 fractions (determinant by gonum/mat's LU factorisation).
func TestSimplexJacobian(t *testing.T) {
	r := rand.New(rand.NewPCG(11, 12))
	const h = 1e-6
	for m := 1; m <= 6; m++ {
		for trial := 0; trial < 5; trial++ {
			y := make([]float64, m)
			for k := range y {
				y[k] = 3 * r.NormFloat64()
			}
			_, logJ := FractionsFromReals(nil, y)
			jac := mat.NewDense(m, m, nil)
			for j := 0; j < m; j++ {
				yp := append([]float64(nil), y...)
				ym := append([]float64(nil), y...)
				yp[j] += h
				ym[j] -= h
				fp, _ := FractionsFromReals(nil, yp)
				fm, _ := FractionsFromReals(nil, ym)
				for i := 0; i < m; i++ {
					jac.Set(i, j, (fp[i]-fm[i])/(2*h))
				}
			}
			logDet, sign := mat.LogDet(jac)
			if sign == 0 {
				t.Fatalf("y = %v: singular finite-difference Jacobian", y)
			}
			if math.Abs(logDet-logJ) > 1e-5 {
				t.Errorf("y = %v: ln|J| = %.10g, finite differences give %.10g", y, logJ, logDet)
			}
		}
	}
}

// TestSimplexRoundTrip checks that the fractions are on the simplex, that
// y = 0 is the centre of the simplex (by construction of the offsets), and
// that RealsFromFractions inverts FractionsFromReals.
func TestSimplexRoundTrip(t *testing.T) {
	r := rand.New(rand.NewPCG(5, 6))
	for m := 0; m <= 7; m++ {
		centre, _ := FractionsFromReals(nil, make([]float64, m))
		for k, f := range centre {
			if math.Abs(f-1/float64(m+1)) > 1e-15 {
				t.Errorf("N = %d: y = 0 gives f_%d = %g, want 1/N", m+1, k, f)
			}
		}
		for trial := 0; trial < 20; trial++ {
			y := make([]float64, m)
			for k := range y {
				y[k] = 4 * r.NormFloat64()
			}
			f, _ := FractionsFromReals(nil, y)
			sum := 0.0
			for _, v := range f {
				if !(v > 0) {
					t.Fatalf("y = %v: fraction %g not positive", y, v)
				}
				sum += v
			}
			if math.Abs(sum-1) > 1e-14 {
				t.Fatalf("y = %v: fractions sum to %.17g", y, sum)
			}
			back, err := RealsFromFractions(nil, f)
			if err != nil {
				t.Fatalf("RealsFromFractions(%v): %v", f, err)
			}
			for k := range y {
				if math.Abs(back[k]-y[k]) > 1e-9*math.Max(1, math.Abs(y[k])) {
					t.Errorf("round trip of y = %v gives %v", y, back)
					break
				}
			}
		}
	}
	for _, bad := range [][]float64{{}, {0.5, 0.6}, {1, 0}, {-0.1, 1.1}, {math.NaN(), 1}} {
		if _, err := RealsFromFractions(nil, bad); err == nil {
			t.Errorf("RealsFromFractions(%v) accepted fractions off the open simplex", bad)
		}
	}
}

// TestExtremeReals checks that the log density stays finite far out in the
// unconstrained space, where naive formulas give 0·∞.
func TestExtremeReals(t *testing.T) {
	d := Dirichlet{N: 4, Alpha: 0.5}
	for _, y := range [][]float64{{800, -800, 3}, {-1e4, 1e4, -1e4}, {40, 40, 40}} {
		lp := d.LogProbReals(y)
		if math.IsNaN(lp) || math.IsInf(lp, 0) {
			t.Errorf("LogProbReals(%v) = %g, want finite", y, lp)
		}
	}
}

// TestDirichletAgainstSciPy compares Dirichlet.LogProb with
// scipy.stats.dirichlet.logpdf (reference file in testdata/config/reference).
func TestDirichletAgainstSciPy(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.Dirichlet {
		d := Dirichlet{N: len(c.X), Alpha: c.Alpha}
		if got := d.LogProb(c.X); math.Abs(got-c.LogPDF) > 1e-10*math.Max(1, math.Abs(c.LogPDF)) {
			t.Errorf("Dirichlet(N=%d, α=%g).LogProb(%v) = %.15g, scipy %.15g", d.N, d.Alpha, c.X, got, c.LogPDF)
		}
		// The density of the reals is the density of the fractions times |J|.
		y, err := RealsFromFractions(nil, c.X)
		if err != nil {
			t.Fatal(err)
		}
		_, logJ := FractionsFromReals(nil, y)
		if got := d.LogProbReals(y); math.Abs(got-(c.LogPDF+logJ)) > 1e-8*math.Max(1, math.Abs(c.LogPDF)) {
			t.Errorf("Dirichlet(N=%d, α=%g).LogProbReals = %.15g, scipy logpdf + ln|J| = %.15g", d.N, d.Alpha, got, c.LogPDF+logJ)
		}
	}
	if d := (Dirichlet{N: 3, Alpha: 1}); !math.IsInf(d.LogProb([]float64{0.5, 0.6, -0.1}), -1) || !math.IsInf(d.LogProb([]float64{0.2, 0.2, 0.2}), -1) {
		t.Error("LogProb is finite off the simplex")
	}
}

// TestTrigammaAgainstSciPy compares trigamma with scipy.special.polygamma(1, x).
func TestTrigammaAgainstSciPy(t *testing.T) {
	ref := loadReference(t)
	for _, c := range ref.Trigamma {
		if got := trigamma(c.X); math.Abs(got-c.Value) > 1e-12*c.Value {
			t.Errorf("trigamma(%g) = %.17g, scipy %.17g", c.X, got, c.Value)
		}
	}
}

// batchMeans returns the mean of xs and its Monte Carlo standard error by the
// method of batch means with nb batches (Flegal, Haran & Jones 2008,
// Statistical Science 23, 250), which accounts for autocorrelation.
func batchMeans(xs []float64, nb int) (mean, se float64) {
	size := len(xs) / nb
	means := make([]float64, nb)
	for b := range means {
		s := 0.0
		for _, x := range xs[b*size : (b+1)*size] {
			s += x
		}
		means[b] = s / float64(size)
		mean += means[b]
	}
	mean /= float64(nb)
	v := 0.0
	for _, m := range means {
		v += (m - mean) * (m - mean)
	}
	v /= float64(nb - 1)
	return mean, math.Sqrt(v / float64(nb))
}

// TestDirichletMomentsByMetropolis samples the unconstrained reals from
// LogProbReals with a random-walk Metropolis chain and checks the moments of
// the fractions against the Dirichlet's: E f_k = 1/N and
// Var f_k = (N − 1)/(N² (Nα + 1)) (Kotz, Balakrishnan & Johnson 2000,
// Continuous Multivariate Distributions vol. 1, ch. 49), and the spread of each
// real against RealsSpread. A missing or wrong Jacobian shifts these by many
// standard errors. The tolerance is 5 Monte Carlo standard errors from batch
// means over 50 batches (seeded chain; a standard error above 0.01 fails the
// test, as the check would then lack power).
func TestDirichletMomentsByMetropolis(t *testing.T) {
	const (
		steps = 300000
		burn  = 5000
	)
	for _, alpha := range []float64{0.5, 1, 3} {
		d := Dirichlet{N: 4, Alpha: alpha}
		r := rand.New(rand.NewPCG(uint64(alpha*1000), 99))
		m := d.Dim()
		y := make([]float64, m)
		prop := make([]float64, m)
		lp := d.LogProbReals(y)
		fr := make([][]float64, d.N)
		sq := make([][]float64, d.N)
		ys := make([][]float64, m)
		f := make([]float64, d.N)
		for i := 0; i < steps+burn; i++ {
			for k := range prop {
				prop[k] = y[k] + 1.2*d.RealsSpread(k)*r.NormFloat64()
			}
			if lq := d.LogProbReals(prop); math.Log(r.Float64()) < lq-lp {
				copy(y, prop)
				lp = lq
			}
			if i < burn {
				continue
			}
			FractionsFromReals(f, y)
			for k, v := range f {
				fr[k] = append(fr[k], v)
				sq[k] = append(sq[k], (v-0.25)*(v-0.25))
			}
			for k, v := range y {
				ys[k] = append(ys[k], v)
			}
		}
		n := float64(d.N)
		wantVar := (n - 1) / (n * n * (n*alpha + 1))
		for k := 0; k < d.N; k++ {
			mean, se := batchMeans(fr[k], 50)
			if se > 0.01 || math.Abs(mean-1/n) > 5*se {
				t.Errorf("α = %g: E f_%d = %.4f ± %.4f, want %.4f", alpha, k, mean, se, 1/n)
			}
			v, sev := batchMeans(sq[k], 50)
			if sev > 0.01 || math.Abs(v-wantVar) > 5*sev {
				t.Errorf("α = %g: Var f_%d = %.5f ± %.5f, want %.5f", alpha, k, v, sev, wantVar)
			}
		}
		for k := 0; k < m; k++ {
			mean, _ := batchMeans(ys[k], 50)
			sqs := make([]float64, len(ys[k]))
			for i, v := range ys[k] {
				sqs[i] = (v - mean) * (v - mean)
			}
			v, sev := batchMeans(sqs, 50)
			want := d.RealsSpread(k) * d.RealsSpread(k)
			if math.Abs(v-want) > 5*sev+0.01*want {
				t.Errorf("α = %g: Var y_%d = %.4f ± %.4f, RealsSpread² = %.4f", alpha, k, v, sev, want)
			}
		}
	}
}

// TestDirichletRand checks the moments of independent draws (ESS = number of
// draws; 5 standard errors) against the Dirichlet's mean and variance, and the
// draws mapped to the reals against RealsSpread.
func TestDirichletRand(t *testing.T) {
	const draws = 40000
	for _, alpha := range []float64{0.7, 2} {
		d := Dirichlet{N: 3, Alpha: alpha}
		src := rand.NewPCG(77, uint64(alpha*10))
		n := float64(d.N)
		wantVar := (n - 1) / (n * n * (n*alpha + 1))
		var s1, s2 [3]float64
		var y1, y2 [2]float64
		for i := 0; i < draws; i++ {
			f := d.Rand(src, nil)
			for k, v := range f {
				s1[k] += v
				s2[k] += (v - 1/n) * (v - 1/n)
			}
			y, err := RealsFromFractions(nil, f)
			if err != nil {
				t.Fatal(err)
			}
			for k, v := range y {
				y1[k] += v
				y2[k] += v * v
			}
		}
		for k := 0; k < d.N; k++ {
			mean := s1[k] / draws
			if se := math.Sqrt(wantVar / draws); math.Abs(mean-1/n) > 5*se {
				t.Errorf("α = %g: mean f_%d = %g, want %g", alpha, k, mean, 1/n)
			}
			v := s2[k] / draws
			// Relative standard error of a variance estimate is about √(2/n)
			// for light tails; 5 of them, doubled for the Beta's kurtosis.
			if math.Abs(v-wantVar) > 10*math.Sqrt(2.0/draws)*wantVar {
				t.Errorf("α = %g: var f_%d = %g, want %g", alpha, k, v, wantVar)
			}
		}
		for k := 0; k < d.Dim(); k++ {
			mean := y1[k] / draws
			v := y2[k]/draws - mean*mean
			want := d.RealsSpread(k) * d.RealsSpread(k)
			if math.Abs(v-want) > 10*math.Sqrt(2.0/draws)*want {
				t.Errorf("α = %g: var y_%d = %g, RealsSpread² = %g", alpha, k, v, want)
			}
		}
	}
	bad := Dirichlet{N: 3, Alpha: -1}.Rand(nil, nil)
	for _, v := range bad {
		if !math.IsNaN(v) {
			t.Errorf("Rand of an invalid Dirichlet gave %v", bad)
			break
		}
	}
}
