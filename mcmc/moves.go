package mcmc

import (
	"fmt"
	"math"
	"math/rand/v2"
	"strconv"
	"sync"
)

// A Move proposes a new position for one walker of the ensemble.
//
// Propose writes the proposal into y (of the same length as x) for the walker
// at x, given the positions of the walkers of the complementary half of the
// ensemble (others, at least two, read only), drawing every random number from
// src, the walker's own stream. It returns the logarithm of the factor that
// multiplies the density ratio in the acceptance probability, so that the
// proposal is accepted with probability
//
//	min(1, exp(logFactor) · p(y)/p(x)).
//
// For a symmetric proposal logFactor is 0; for the stretch move it is
// (n−1)·ln z (Goodman & Weare 2010).
//
// Propose is called concurrently for different walkers, each call with its
// own y and src, so it must not modify the Move, x or others.
//
// The slice moves of this package (DifferentialSliceMove, GaussianSliceMove)
// implement Move differently: Propose writes a direction into y, and the
// sampler moves the walker by slice sampling along it, with no
// Metropolis–Hastings test.
//
// A checkpoint records each move's description (its String method if it has
// one, else its printed value) and a resumed run must use moves with the
// same descriptions; moves holding pointers should therefore have a String
// method.
type Move interface {
	Propose(y, x []float64, others [][]float64, src *rand.Rand) (logFactor float64)
}

// WeightedMove is a Move with its relative weight in a mixture of moves.
// The move of each step is chosen with probability proportional to Weight.
type WeightedMove struct {
	// Move is the proposal.
	Move Move
	// Weight is the move's relative weight, positive; a zero weight is taken as 1.
	Weight float64
}

// moveChecker is implemented by the moves of this package so that a run can
// refuse settings under which a move cannot work.
type moveChecker interface {
	check(dim, others int) error
}

// StretchMove is the affine-invariant stretch move of Goodman & Weare (2010,
// Comm. App. Math. Comp. Sci. 5, 65): a partner X_j is drawn from the
// other half and the proposal is Y = X_j + z (X − X_j), with z drawn from
// g(z) ∝ 1/√z on [1/a, a].
type StretchMove struct {
	// A is the scale a > 1 of the stretch; zero means 2, the value
	// Goodman & Weare recommend.
	A float64
}

func (m StretchMove) scale() float64 {
	if m.A == 0 {
		return 2
	}
	return m.A
}

// Propose implements Move.
func (m StretchMove) Propose(y, x []float64, others [][]float64, src *rand.Rand) float64 {
	a := m.scale()
	// Inverse of the cumulative distribution of g(z) ∝ 1/√z on [1/a, a].
	u := src.Float64()
	s := (a-1)*u + 1
	z := s * s / a
	xj := others[src.IntN(len(others))]
	for i := range y {
		y[i] = xj[i] + z*(x[i]-xj[i])
	}
	return float64(len(x)-1) * math.Log(z)
}

func (m StretchMove) check(dim, others int) error {
	if a := m.scale(); !(a > 1) || math.IsInf(a, 0) {
		return fmt.Errorf("stretch move: scale a = %v, want a finite value above 1", m.A)
	}
	return nil
}

// String describes the move and its settings, with defaults filled in.
func (m StretchMove) String() string {
	return "stretch(a=" + strconv.FormatFloat(m.scale(), 'g', -1, 64) + ")"
}

// DifferentialMove is the differential-evolution move of ter Braak (2006,
// Stat. Comput. 16, 239): two distinct walkers X_j, X_k are drawn from the
// other half and the proposal is Y = X + γ (X_j − X_k). The proposal is
// symmetric.
type DifferentialMove struct {
	// Gamma is the scale γ of the difference vector; zero means
	// 2.38/√(2n) for n parameters, ter Braak's choice for Gaussian targets.
	Gamma float64
	// Jitter is the relative spread of γ: each proposal uses
	// γ·(1 + Jitter·ξ) with ξ standard normal, which keeps the move from
	// repeating the same finite set of steps. Zero means 1e-4; a negative
	// value turns the jitter off.
	Jitter float64
	// JumpProbability is the probability of using γ = 1 instead, which lets
	// walkers jump between separated modes of equal shape (ter Braak 2006,
	// 2006). Zero, the default, never jumps.
	JumpProbability float64
}

func (m DifferentialMove) gamma(dim int) float64 {
	if m.Gamma == 0 {
		return 2.38 / math.Sqrt(2*float64(dim))
	}
	return m.Gamma
}

func (m DifferentialMove) jitter() float64 {
	switch {
	case m.Jitter == 0:
		return 1e-4
	case m.Jitter < 0:
		return 0
	}
	return m.Jitter
}

// Propose implements Move.
func (m DifferentialMove) Propose(y, x []float64, others [][]float64, src *rand.Rand) float64 {
	n := len(others)
	j := src.IntN(n)
	k := src.IntN(n - 1)
	if k >= j {
		k++
	}
	g := m.gamma(len(x))
	if m.JumpProbability > 0 && src.Float64() < m.JumpProbability {
		g = 1
	}
	if s := m.jitter(); s > 0 {
		g *= 1 + s*src.NormFloat64()
	}
	xj, xk := others[j], others[k]
	for i := range y {
		y[i] = x[i] + g*(xj[i]-xk[i])
	}
	return 0
}

func (m DifferentialMove) check(dim, others int) error {
	if g := m.gamma(dim); !(g > 0) || math.IsInf(g, 0) {
		return fmt.Errorf("differential-evolution move: gamma = %v, want a finite positive value", m.Gamma)
	}
	if math.IsNaN(m.Jitter) || math.IsInf(m.Jitter, 0) {
		return fmt.Errorf("differential-evolution move: jitter = %v, want a finite value", m.Jitter)
	}
	if !(m.JumpProbability >= 0 && m.JumpProbability <= 1) {
		return fmt.Errorf("differential-evolution move: jump probability = %v, want a value in [0, 1]", m.JumpProbability)
	}
	if others < 2 {
		return fmt.Errorf("differential-evolution move: needs at least 2 walkers in each half, have %d", others)
	}
	return nil
}

// String describes the move and its settings, with defaults filled in.
func (m DifferentialMove) String() string {
	g := "2.38/sqrt(2n)"
	if m.Gamma != 0 {
		g = strconv.FormatFloat(m.Gamma, 'g', -1, 64)
	}
	return fmt.Sprintf("differential(gamma=%s,jitter=%s,jump=%s)", g,
		strconv.FormatFloat(m.jitter(), 'g', -1, 64),
		strconv.FormatFloat(m.JumpProbability, 'g', -1, 64))
}

// WalkMove is the walk move of Goodman & Weare (2010): a subset S of
// the other half is drawn without replacement and the proposal is
//
//	Y = X + Σ_{j∈S} Z_j (X_j − X̄_S),
//
// with Z_j independent standard normal and X̄_S the mean of the subset, so
// the step has the covariance of the subset. The proposal is symmetric.
type WalkMove struct {
	// Subset is the number of walkers |S| ≥ 2 in each subset; zero means the
	// whole other half.
	Subset int
}

// walkScratch holds per-call work space of the walk move (chosen indices and
// their normal deviates); pooled so that steady-state sampling allocates nothing.
var walkScratch = sync.Pool{New: func() any { return new([]float64) }}

// Propose implements Move.
func (m WalkMove) Propose(y, x []float64, others [][]float64, src *rand.Rand) float64 {
	n := len(others)
	s := m.Subset
	if s == 0 || s > n {
		s = n
	}
	bufp := walkScratch.Get().(*[]float64)
	if cap(*bufp) < 2*s {
		*bufp = make([]float64, 2*s)
	}
	buf := (*bufp)[:2*s]
	idx, z := buf[:s], buf[s:]
	// Selection sampling (Knuth, TAOCP vol. 2, §3.4.2, Algorithm S):
	// each of the n walkers is kept with probability (needed)/(remaining).
	if s == n {
		for j := range idx {
			idx[j] = float64(j)
		}
	} else {
		chosen := 0
		for j := 0; j < n && chosen < s; j++ {
			if float64(n-j)*src.Float64() < float64(s-chosen) {
				idx[chosen] = float64(j)
				chosen++
			}
		}
	}
	// Σ Z_j (X_j − X̄) = Σ (Z_j − Z̄) X_j.
	var zbar float64
	for j := range z {
		z[j] = src.NormFloat64()
		zbar += z[j]
	}
	zbar /= float64(s)
	copy(y, x)
	for j := range idx {
		w := z[j] - zbar
		xj := others[int(idx[j])]
		for i := range y {
			y[i] += w * xj[i]
		}
	}
	walkScratch.Put(bufp)
	return 0
}

func (m WalkMove) check(dim, others int) error {
	if m.Subset < 0 || m.Subset == 1 {
		return fmt.Errorf("walk move: subset size %d, want 0 (whole half) or at least 2", m.Subset)
	}
	if m.Subset > others {
		return fmt.Errorf("walk move: subset size %d exceeds the %d walkers of each half", m.Subset, others)
	}
	return nil
}

// String describes the move and its settings, with defaults filled in.
func (m WalkMove) String() string {
	if m.Subset == 0 {
		return "walk(subset=half)"
	}
	return "walk(subset=" + strconv.Itoa(m.Subset) + ")"
}

// describeMove names a move and its settings for the compatibility check on resume.
func describeMove(m Move) string {
	if s, ok := m.(fmt.Stringer); ok {
		return s.String()
	}
	return fmt.Sprintf("%T%+v", m, m)
}

// sliceMove is implemented by the moves that update a walker by slice
// sampling along a direction instead of a Metropolis–Hastings test: their
// Propose writes the direction of unit width into y and returns 0, and the
// sampler scales it by the move's width μ and slice-samples along it.
type sliceMove interface {
	Move
	// width is the initial width μ₀ of the move, before any tuning.
	width() float64
	// maxSteps bounds the stepping-out expansions of one update.
	maxSteps() int
}

// DifferentialSliceMove is the differential-direction move of ensemble slice
// sampling (Karamanis & Beutler 2021, Stat. Comput. 31, 61, §3.2): two
// distinct walkers X_l, X_m are drawn from the other half and the walker is
// moved by univariate slice sampling (Neal 2003, Ann. Stat. 31, 705, §4,
// stepping out and shrinking) along the line X + t·η with η = μ (X_l − X_m).
// Every update moves the walker; it costs a variable number of evaluations
// (at least one).
//
// The width μ starts at Width and, during the first Settings.TuneSteps steps
// of a run, is tuned after each step in which the move was used by
// μ ← 2μ·N_e/(N_e + N_c), N_e and N_c being the expansions and contractions
// of the intervals over the ensemble in that step (Karamanis & Beutler 2021,
// Algorithm 4; N_e is taken as at least 1), which drives their ratio to 1/2;
// the width is frozen afterwards.
type DifferentialSliceMove struct {
	// Width is the initial width μ₀ > 0; zero means 1, the paper's choice.
	Width float64
	// MaxSteps bounds the stepping-out expansions per update (Neal's m);
	// zero means 10000.
	MaxSteps int
}

// Propose implements Move: it writes the direction X_l − X_m into y.
func (m DifferentialSliceMove) Propose(y, x []float64, others [][]float64, src *rand.Rand) float64 {
	n := len(others)
	j := src.IntN(n)
	k := src.IntN(n - 1)
	if k >= j {
		k++
	}
	xj, xk := others[j], others[k]
	for i := range y {
		y[i] = xj[i] - xk[i]
	}
	return 0
}

func (m DifferentialSliceMove) width() float64 { return sliceWidth(m.Width) }
func (m DifferentialSliceMove) maxSteps() int  { return sliceSteps(m.MaxSteps) }

func (m DifferentialSliceMove) check(dim, others int) error {
	if err := checkSlice("differential slice move", m.Width, m.MaxSteps); err != nil {
		return err
	}
	if others < 2 {
		return fmt.Errorf("differential slice move: needs at least 2 walkers in each half, have %d", others)
	}
	return nil
}

// String describes the move and its settings, with defaults filled in.
func (m DifferentialSliceMove) String() string {
	return "differential-slice(width=" + strconv.FormatFloat(m.width(), 'g', -1, 64) +
		",max_steps=" + strconv.Itoa(m.maxSteps()) + ")"
}

// GaussianSliceMove is the Gaussian-direction move of ensemble slice
// sampling (Karamanis & Beutler 2021, Stat. Comput. 31, 61, §3.3): the
// direction is drawn as η = 2μ·ξ with ξ ~ N(0, C_S), C_S being the sample
// covariance (divisor |S|) of the other half S, and the walker is moved by
// slice sampling along X + t·η as in DifferentialSliceMove, whose width
// tuning it shares. ξ is drawn without factorising C_S as
// Σ_{j∈S} z_j (X_j − X̄_S)/√|S| with z_j independent standard normal, which
// has covariance C_S exactly and needs no full-rank C_S.
type GaussianSliceMove struct {
	// Width is the initial width μ₀ > 0; zero means 1, the paper's choice.
	Width float64
	// MaxSteps bounds the stepping-out expansions per update (Neal's m);
	// zero means 10000.
	MaxSteps int
}

// Propose implements Move: it writes the direction 2ξ into y.
func (m GaussianSliceMove) Propose(y, x []float64, others [][]float64, src *rand.Rand) float64 {
	n := len(others)
	// 2 Σ z_j (X_j − X̄)/√n = Σ c_j X_j with c_j = 2 (z_j − z̄)/√n.
	bufp := walkScratch.Get().(*[]float64)
	if cap(*bufp) < n {
		*bufp = make([]float64, n)
	}
	z := (*bufp)[:n]
	var zbar float64
	for j := range z {
		z[j] = src.NormFloat64()
		zbar += z[j]
	}
	zbar /= float64(n)
	f := 2 / math.Sqrt(float64(n))
	clear(y)
	for j, xj := range others {
		c := f * (z[j] - zbar)
		for i := range y {
			y[i] += c * xj[i]
		}
	}
	walkScratch.Put(bufp)
	return 0
}

func (m GaussianSliceMove) width() float64 { return sliceWidth(m.Width) }
func (m GaussianSliceMove) maxSteps() int  { return sliceSteps(m.MaxSteps) }

func (m GaussianSliceMove) check(dim, others int) error {
	return checkSlice("Gaussian slice move", m.Width, m.MaxSteps)
}

// String describes the move and its settings, with defaults filled in.
func (m GaussianSliceMove) String() string {
	return "gaussian-slice(width=" + strconv.FormatFloat(m.width(), 'g', -1, 64) +
		",max_steps=" + strconv.Itoa(m.maxSteps()) + ")"
}

func sliceWidth(w float64) float64 {
	if w == 0 {
		return 1
	}
	return w
}

func sliceSteps(m int) int {
	if m == 0 {
		return 10000
	}
	return m
}

func checkSlice(name string, width float64, steps int) error {
	if !(width >= 0) || math.IsInf(width, 0) {
		return fmt.Errorf("%s: width %v, want a finite positive value", name, width)
	}
	if steps < 0 {
		return fmt.Errorf("%s: at most %d stepping-out steps, want a positive number", name, steps)
	}
	return nil
}

// IndependenceMove is an independence Metropolis–Hastings proposal (Tierney
// 1994, Ann. Stat. 22, 1701, §2.3.3) fitted to the other half of the
// ensemble: the proposal Y is drawn, whatever the walker's position X, from
// the multivariate Student t density q with DOF degrees of freedom, centred
// on the mean X̄_S of the other half S, whose scale matrix is Scale² times
// the sample covariance C_S (divisor |S| − 1) of that half, and it is
// accepted with probability min(1, p(Y) q(X) / (p(X) q(Y))). Since q depends
// only on the other half, which stands still while a half moves, each
// update leaves the target invariant, by the same argument as for the
// stretch move (Goodman & Weare 2010, §3).
//
// The move jumps across the whole posterior in one step when the posterior
// is close to the ensemble's t density, and is rejected almost always when
// it is not (far tails, several modes, strong curvature); mix it with a
// local move such as DifferentialMove. C_S must be of full rank, which needs
// more walkers in each half than parameters, and is estimated well only
// with several times as many. When C_S is not positive definite the
// proposal is the current point with a log-factor of −∞, that is rejected.
type IndependenceMove struct {
	// Scale multiplies the spread of the proposal, > 0; zero means 1.
	Scale float64
	// DOF is the number of degrees of freedom ν ≥ 1 of the Student t; zero
	// means 5, whose tails are heavier than a Gaussian's so that walkers in
	// the posterior's tails are still proposed.
	DOF int
}

func (m IndependenceMove) scale() float64 {
	if m.Scale == 0 {
		return 1
	}
	return m.Scale
}

func (m IndependenceMove) dof() int {
	if m.DOF == 0 {
		return 5
	}
	return m.DOF
}

// independenceScratch holds the work space of one IndependenceMove proposal:
// the mean, the Cholesky factor (row-major, lower triangle) and a vector.
type independenceScratch struct{ mean, chol, v []float64 }

var independencePool = sync.Pool{New: func() any { return new(independenceScratch) }}

// Propose implements Move.
func (m IndependenceMove) Propose(y, x []float64, others [][]float64, src *rand.Rand) float64 {
	d, n := len(x), len(others)
	w := independencePool.Get().(*independenceScratch)
	defer independencePool.Put(w)
	if cap(w.mean) < d {
		w.mean, w.chol, w.v = make([]float64, d), make([]float64, d*d), make([]float64, d)
	}
	mean, l, v := w.mean[:d], w.chol[:d*d], w.v[:d]
	clear(mean)
	for _, o := range others {
		for i := range mean {
			mean[i] += o[i]
		}
	}
	for i := range mean {
		mean[i] /= float64(n)
	}
	s := m.scale()
	c := s * s / float64(n-1)
	for a := range d {
		for b := 0; b <= a; b++ {
			var sum float64
			for _, o := range others {
				sum += (o[a] - mean[a]) * (o[b] - mean[b])
			}
			l[a*d+b] = c * sum
		}
	}
	// The normal deviates are drawn before the factorisation can fail, so
	// that every proposal takes the same numbers from the walker's stream.
	nu := m.dof()
	for i := range v {
		v[i] = src.NormFloat64()
	}
	var chi2 float64
	for range nu {
		g := src.NormFloat64()
		chi2 += g * g
	}
	if !choleskyLower(l, d) {
		copy(y, x)
		return math.Inf(-1)
	}
	// Y = X̄ + √(ν/χ²) L z, whose squared distance in the metric of the
	// scale matrix is (ν/χ²)|z|².
	f := math.Sqrt(float64(nu) / chi2)
	var qy float64
	for i := range y {
		var sum float64
		for j := 0; j <= i; j++ {
			sum += l[i*d+j] * v[j]
		}
		y[i] = mean[i] + f*sum
		qy += v[i] * v[i]
	}
	qy *= f * f
	// Squared distance of X: solve L r = X − X̄ by forward substitution.
	var qx float64
	for i := range d {
		sum := x[i] - mean[i]
		for j := 0; j < i; j++ {
			sum -= l[i*d+j] * v[j]
		}
		v[i] = sum / l[i*d+i]
		qx += v[i] * v[i]
	}
	// ln q(X) − ln q(Y) for the t density, ln q = −(ν+d)/2 · ln(1 + r²/ν) + const.
	e := -0.5 * float64(nu+d)
	return e * (math.Log1p(qx/float64(nu)) - math.Log1p(qy/float64(nu)))
}

// choleskyLower factorises the symmetric matrix whose lower triangle is in a
// (row-major, n×n) in place into its lower Cholesky factor, and reports
// whether the matrix is positive definite.
func choleskyLower(a []float64, n int) bool {
	for j := range n {
		sum := a[j*n+j]
		for k := 0; k < j; k++ {
			sum -= a[j*n+k] * a[j*n+k]
		}
		if !(sum > 0) {
			return false
		}
		djj := math.Sqrt(sum)
		a[j*n+j] = djj
		for i := j + 1; i < n; i++ {
			sum := a[i*n+j]
			for k := 0; k < j; k++ {
				sum -= a[i*n+k] * a[j*n+k]
			}
			a[i*n+j] = sum / djj
		}
	}
	return true
}

func (m IndependenceMove) check(dim, others int) error {
	if s := m.scale(); !(s > 0) || math.IsInf(s, 0) {
		return fmt.Errorf("independence move: scale %v, want a finite positive value", m.Scale)
	}
	if m.DOF < 0 {
		return fmt.Errorf("independence move: %d degrees of freedom, want a positive number", m.DOF)
	}
	if others <= dim {
		return fmt.Errorf("independence move: needs more walkers in each half than the %d parameters, have %d", dim, others)
	}
	return nil
}

// String describes the move and its settings, with defaults filled in.
func (m IndependenceMove) String() string {
	return "independence(scale=" + strconv.FormatFloat(m.scale(), 'g', -1, 64) +
		",dof=" + strconv.Itoa(m.dof()) + ")"
}
