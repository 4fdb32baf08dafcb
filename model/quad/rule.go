package quad

// The 7-point Gauss–Legendre rule and its 15-point Kronrod extension on
// [−1, 1], as tabulated for the routine qk15 of QUADPACK (Piessens, de
// Doncker-Kapenga, Überhuber & Kahaner 1983, QUADPACK: A Subroutine Package
// for Automatic Integration, Springer), quoted here from memory and checked in
// the tests against testdata/quad/kronrod15.json, which recomputes them from
// the Legendre polynomial P7 and the Stieltjes polynomial E8. The
// recomputed fifth node differs from the quoted one beyond its 21st digit,
// far below float64 precision; every value rounds to the same float64.
//
// kronrodX holds the non-negative nodes in descending order; the nodes with
// odd index (0.949…, 0.741…, 0.406…, 0) are the Gauss nodes, whose Gauss
// weights gaussW lists in the same order.
var (
	kronrodX = [8]float64{
		0.991455371120812639206854697526329,
		0.949107912342758524526189684047851,
		0.864864423359769072789712788640926,
		0.741531185599394439863864773280788,
		0.586087235467691130294144845693013,
		0.405845151377397166906606412076961,
		0.207784955007898467600689403773245,
		0,
	}
	kronrodW = [8]float64{
		0.022935322010529224963732008058970,
		0.063092092629978553290700663189204,
		0.104790010322250183839876322541518,
		0.140653259715525918745189590510238,
		0.169004726639267902826583426598550,
		0.190350578064785409913256402421014,
		0.204432940075298892414161999234649,
		0.209482141084727828012999174891714,
	}
	gaussW = [4]float64{
		0.129484966168869693270611432679082,
		0.279705391489276667901467771423780,
		0.381830050505118944950369775488975,
		0.417959183673469387755102040816327,
	}
)

// PanelNodes is the number of nodes in each panel: those of the 15-point
// Kronrod rule.
const PanelNodes = 15

// unitX, unitK and unitG are the rule on [−1, 1] in ascending order of node:
// position 7 is the centre, the Gauss nodes sit at the odd positions, and
// unitG is zero at the even ones.
var unitX, unitK, unitG [PanelNodes]float64

func init() {
	for i := range 7 {
		unitX[i], unitX[14-i] = -kronrodX[i], kronrodX[i]
		unitK[i], unitK[14-i] = kronrodW[i], kronrodW[i]
	}
	unitX[7], unitK[7] = 0, kronrodW[7]
	for j := range 3 {
		unitG[2*j+1], unitG[13-2*j] = gaussW[j], gaussW[j]
	}
	unitG[7] = gaussW[3]
}

// panelRule writes the nodes and Kronrod weights of the panel [a, b] into u
// and w, in ascending order of node. The explicit float64 conversion keeps
// the compiler from fusing the multiply and add, so that the nodes are the
// same on every platform and a restored layout reproduces them bit for bit.
func panelRule(a, b float64, u, w []float64) {
	c := 0.5 * (a + b)
	h := 0.5 * (b - a)
	for i := range PanelNodes {
		u[i] = c + float64(h*unitX[i])
		w[i] = h * unitK[i]
	}
}

// UnitRule returns the panel rule on [−1, 1] in ascending order of node: the 15 Kronrod
// nodes, their Kronrod weights, and the 7-point Gauss weights at the same nodes (zero at
// the nodes that are not Gauss nodes), so that Σ (k_i − g_i) f(x_i) is the usual error
// estimate |K15 − G7| of one panel.
func UnitRule() (x, k, g [PanelNodes]float64) { return unitX, unitK, unitG }
