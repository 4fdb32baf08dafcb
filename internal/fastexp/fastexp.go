// Package fastexp computes e^x about twice as fast as math.Exp, to within two units in the
// last place, for the likelihood's inner loops, where exponentials are most of the work.
//
// The method is the table-driven one of Tang (1989, ACM Trans. Math. Softw. 15, 144):
// x = (64m + j) ln2/64 + r with |r| ≤ ln2/128, e^x = 2^m · 2^(j/64) · e^r, the 64 values
// 2^(j/64) from a table and e^r − 1 from its Taylor polynomial of degree 5, whose
// truncation error r⁶/720 ≤ 4e-17 is below half a unit in the last place. The reduction
// uses ln 2 split in two parts (the split of fdlibm's e_exp.c) so that 64m·ln2hi is exact.
// Arguments outside (−708, 709), where the result would be subnormal or overflow, and NaN
// go to math.Exp.
package fastexp

import "math"

const (
	tableBits = 6
	tableLen  = 1 << tableBits
	// shifter is 1.5·2⁵²: adding it to a number below 2⁵¹ in magnitude rounds that number
	// to an integer, left in the low bits of the sum's representation.
	shifter = 0x1.8p52
	invLn2N = tableLen / math.Ln2
	// ln2Hi and ln2Lo are fdlibm's split of ln 2 (ln2Hi has its low 32 bits zero), over 64.
	ln2Hi = 6.93147180369123816490e-01 / tableLen
	ln2Lo = 1.90821492927058770002e-10 / tableLen
)

// table holds the bits of 2^(j/64), j = 0 … 63.
var table [tableLen]uint64

func init() {
	for j := range table {
		table[j] = math.Float64bits(math.Exp2(float64(j) / tableLen))
	}
}

// Exp returns e^x, within two units in the last place of math.Exp's value; it returns
// math.Exp(x) for x outside (−708, 709) and for NaN.
func Exp(x float64) float64 {
	if !(x > -708 && x < 709) {
		return math.Exp(x)
	}
	t := x*invLn2N + shifter
	kb := math.Float64bits(t)
	kf := t - shifter
	r := (x - kf*ln2Hi) - kf*ln2Lo
	k := int64(kb<<12) >> 12 // the integer 64m + j, sign-extended from the low 52 bits
	s := math.Float64frombits(table[k&(tableLen-1)] + uint64(k>>tableBits)<<52)
	// The polynomial in Estrin's form, whose chain of dependent operations is shorter than
	// Horner's: an exponential whose argument comes from another waits for it less.
	r2 := r * r
	p := r + r2*((1.0/2+r*(1.0/6))+r2*((1.0/24+r*(1.0/120))+r2*(1.0/720)))
	return s + s*p
}
