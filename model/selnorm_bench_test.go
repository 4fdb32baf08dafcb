package model

import (
	"testing"
)

func BenchmarkNormalisationScratch(b *testing.B) {
	cases, _ := readSelCases(b)
	for _, c := range cases {
		b.Run(c.Name, func(b *testing.B) {
			d, sel := c.layout(b)
			n := newNormaliser(sel, c.Vertical != "none", c.DMin, c.DMax)
			z := make([]float64, d.NumArms()+1)
			for range b.N {
				n.values(z, d, c.R0, c.ScaleHeight, c.ZSun, c.DiskScale)
			}
		})
	}
}
