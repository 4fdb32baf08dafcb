package model

import (
	"testing"
)

// BenchmarkNormalisationCases times the normalisation of each case of
// testdata/selnorm/selnorm_cases.json with reused storage, the field's share computed afresh
// each time; points/op counts the plane points at which the layer's share is computed.
func BenchmarkNormalisationCases(b *testing.B) {
	cases := readSelCases(b)
	for _, c := range cases {
		b.Run(c.Name, func(b *testing.B) {
			d, sel := c.layout(b)
			n := newNormaliser(sel, c.Vertical != "none", c.DMin, c.DMax)
			z := make([]float64, d.NumArms()+1)
			b.ReportAllocs()
			n.values(z, d, c.R0, c.ScaleHeight, c.ZSun, c.DiskScale)
			n.points = 0
			b.ResetTimer()
			for range b.N {
				n.fieldSet = false // the whole cost, as at a new R0
				n.values(z, d, c.R0, c.ScaleHeight, c.ZSun, c.DiskScale)
			}
			b.ReportMetric(float64(n.points)/float64(b.N), "points/op")
		})
	}
}
