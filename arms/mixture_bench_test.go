package arms

import (
	"math"
	"math/rand/v2"
	"testing"
)

var mixSink float64

// BenchmarkMixerAt evaluates the mixture of an invented four-armed layout (the shape of the
// likelihood's benchmark galaxy, a field fraction of 0.15) at 32 points along each of 100
// random sightlines from the Sun out to 18 kpc, and reports ns/point.
func BenchmarkMixerAt(b *testing.B) {
	d, err := NewDensity(Layout{R0: testR0, Arms: []Arm{
		{Name: "Osprey", RRef: 5, Pitch: 12 * deg, BetaStart: -40 * deg, BetaEnd: 160 * deg, Width: 0.25},
		{Name: "Quill", RRef: 6.7, Pitch: 11 * deg, BetaStart: -50 * deg, BetaEnd: 170 * deg, Width: 0.3},
		{Name: "Sorrel", RRef: 9.3, Pitch: 12 * deg, BetaStart: -60 * deg, BetaEnd: 130 * deg, Width: 0.3},
		{Name: "Wren", RRef: 11.8, Pitch: 10 * deg, BetaStart: -60 * deg, BetaEnd: 100 * deg, Width: 0.35},
	}})
	if err != nil {
		b.Fatal(err)
	}
	var m Mixer
	m.Reset(d, []float64{0.15, 0.2, 0.25, 0.2, 0.2})
	r := rand.New(rand.NewPCG(3, 3))
	const lines, nodes = 100, 32
	R, beta := make([]float64, lines*nodes), make([]float64, lines*nodes)
	for i := range lines {
		l := 2 * math.Pi * r.Float64()
		for j := range nodes {
			dist := 0.1 + 18*float64(j)/nodes
			x, y := testR0-dist*math.Cos(l), dist*math.Sin(l)
			R[i*nodes+j], beta[i*nodes+j] = math.Hypot(x, y), math.Atan2(y, x)
		}
	}
	var sum float64
	for b.Loop() {
		for j, Rj := range R {
			F, S := m.At(Rj, beta[j])
			sum += F + S
		}
	}
	mixSink = sum
	b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N)/(lines*nodes), "ns/point")
}
