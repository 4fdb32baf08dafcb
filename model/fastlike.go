package model

import (
	"math"

	"github.com/mirabilis-astro/mirabilis/internal/fastexp"
)

// nodeScratch holds one source's node values during an indexed evaluation: the log part a_j
// and the linear part l_j of the integrand times the weight, w_j f(u_j) = l_j exp(a_j).
type nodeScratch struct {
	a, lin []float64
}

func (ns *nodeScratch) size(n int) ([]float64, []float64) {
	if cap(ns.a) < n {
		ns.a, ns.lin = make([]float64, n), make([]float64, n)
	}
	return ns.a[:n], ns.lin[:n]
}

// sourceIndexed returns ln L_i of source i under the parameter set of st, from the grid's
// per-node arrays, with one exponential per node for the quadrature sum: the spatial
// mixture relative to the field's term (arms.Mixer) and the kinematic normalisation are
// kept as plain numbers l_j, the rest (with the field's log-density) in the log a_j, and
// ln L_i = max a + ln Σ l_j exp(a_j − max a). It returns ok = false, leaving the source to
// the reference path, where a plain number underflows (a mixture below 1e-300 where the
// field is not factored out, or a sum below 1e-280) or the sum is not finite.
func (L *Likelihood) sourceIndexed(i int, st *state, ek int, ns *nodeScratch) (float64, bool) {
	s, g, spec := &L.Sources[i], L.grids[i], L.Spec
	a, lin := ns.size(len(g.d))
	m := &st.motion
	r0, srcU, srcV := m.r0, m.src.U, m.src.V
	vs0, vs1, vz := m.vSun[0], m.vSun[1], m.src.W-m.vSun[2]
	sg := &s.Sight
	cosL, sinL, cosB, sinB := sg.CosL, sg.SinL, sg.CosB, sg.SinB
	hasV, hasPM1, hasPM2 := s.HasV, s.HasPM[0], s.HasPM[1]
	hasPM := hasPM1 || hasPM2
	var nk float64
	for _, h := range [3]bool{hasV, hasPM1, hasPM2} {
		if h {
			nk++
		}
	}
	aConst := -nk * halfLog2Pi
	em := &spec.Errors
	if ek == errStudent {
		aConst += nk * (em.tNorm + halfLog2Pi)
	}
	vOff := 0.0
	if s.VLSR {
		vOff = sg.StdDotN
	}
	vErr2 := s.VErr * s.VErr
	pmErr2 := [2]float64{s.PMErr[0] * s.PMErr[0], s.PMErr[1] * s.PMErr[1]}
	bar, sigVir := spec.Bar, st.sigVir
	galaxy, label := spec.Galaxy, s.Label
	layer := galaxy && spec.Vertical
	zSun, invH := st.zSun, 0.0
	if layer {
		aConst += st.layerConst
		invH = 1 / st.scaleHeight
	}
	for j := range a {
		x, y := r0-g.px[j], g.py[j]
		R := math.Sqrt(x*x + y*y)
		cb, sb := 1.0, 0.0
		if R > 0 {
			cb, sb = x/R, y/R
		}
		aj, lj := g.base[j]+aConst, g.w[j]
		if layer {
			t := (g.dz[j] + zSun) * invH
			aj -= 0.5 * t * t
		}
		if hasV || hasPM {
			var th float64
			switch st.curveKind {
			case curveKindLinear:
				th = st.linear.Theta(R)
			case curveKindPower:
				th = st.power.Theta(R)
			default:
				th = st.nodes.Theta(R)
			}
			rot := th + srcV
			vx := rot*sb + srcU*cb - vs0
			vy := rot*cb - srcU*sb - vs1
			h := vx*cosL + vy*sinL
			v2 := bar.Variance(R, sigVir)
			prod, q := 1.0, 1.0
			var z2sum float64
			if hasV {
				r, vv := s.V-(h*cosB+vz*sinB+vOff), vErr2+v2
				z2 := r * r / vv
				z2sum += z2
				if ek != errGaussian {
					q *= kernelFactor(ek, z2, em.dof)
				}
				prod *= vv
			}
			if hasPM {
				inv := g.invKD[j]
				mul, mub := (vy*cosL-vx*sinL)*inv, (vz*cosB-h*sinB)*inv
				m1, m2 := mul, mub
				if !s.PMGalactic {
					m1 = sg.CosPhi*mul - sg.SinPhi*mub
					m2 = sg.SinPhi*mul + sg.CosPhi*mub
				}
				mu2 := v2 * inv * inv
				if hasPM1 {
					r, vv := s.PM[0]-m1, pmErr2[0]+mu2
					z2 := r * r / vv
					z2sum += z2
					if ek != errGaussian {
						q *= kernelFactor(ek, z2, em.dof)
					}
					prod *= vv
				}
				if hasPM2 {
					r, vv := s.PM[1]-m2, pmErr2[1]+mu2
					z2 := r * r / vv
					z2sum += z2
					if ek != errGaussian {
						q *= kernelFactor(ek, z2, em.dof)
					}
					prod *= vv
				}
			}
			lj /= math.Sqrt(prod)
			switch ek {
			case errGaussian:
				aj -= 0.5 * z2sum
			case errTolerant:
				lj *= q
			case errStudent:
				aj -= em.tPow * math.Log(q)
			}
		}
		if galaxy {
			beta := math.Atan2(sb, cb)
			if label == 0 {
				lf, sp := st.mix.At(R, beta)
				if !(sp > 1e-300) {
					return 0, false
				}
				aj += lf
				lj *= sp
			} else {
				aj += st.density.LogArm(label-1, R, beta) + st.logFrac[label]
			}
		}
		a[j], lin[j] = aj, lj
	}
	mx := math.Inf(-1)
	for _, v := range a {
		mx = max(mx, v)
	}
	if math.IsInf(mx, 0) || mx != mx {
		return 0, false
	}
	var sum float64
	for j, v := range a {
		sum += lin[j] * fastexp.Exp(v-mx)
	}
	if !(sum > 1e-280) || math.IsInf(sum, 1) {
		return 0, false
	}
	return mx + math.Log(sum), true
}

// kernelFactor is the error model's kernel at z² in the form sourceIndexed accumulates:
// 1 for the Gaussian (whose −z²/2 goes to the log part), the tolerant model's
// (1 − exp(−z²/2))/z² (0.5 − z²/8 near 0), and the Student-t model's 1 + z²/ν, whose
// product's logarithm, times −(ν+1)/2, is the sum of the kernels.
func kernelFactor(ek int, z2, dof float64) float64 {
	switch ek {
	case errTolerant:
		if z2 < 1e-8 {
			return 0.5 - z2/8
		}
		return -math.Expm1(-0.5*z2) / z2
	case errStudent:
		return 1 + z2/dof
	}
	return 1
}

// logLIndexed returns Σ ln L_i over the sources that are not excluded, under the parameter
// set of st, in the order of the sources. A source the indexed path leaves alone is
// evaluated by the reference path (SourceLogL).
func (L *Likelihood) logLIndexed(st *state, ek int, ns *nodeScratch, lo, hi int, terms []float64) float64 {
	var total float64
	for i := lo; i < hi; i++ {
		if L.Excluded[i] {
			continue
		}
		v, ok := L.sourceIndexed(i, st, ek, ns)
		if ok {
			v -= st.sel.logNorm
		} else {
			p, err := st.reference()
			if err != nil {
				v = math.NaN()
			} else {
				v = L.SourceLogL(i, p)
			}
		}
		if terms != nil {
			terms[i] = v
		}
		total += v
	}
	return total
}
