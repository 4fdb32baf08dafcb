package arms_test

import (
	"fmt"
	"math"

	"github.com/mirabilis-astro/mirabilis/arms"
)

const deg = math.Pi / 180

// A model galaxy of two invented arms: the log-densities of the field and both arms at one
// point, and where each arm crosses one line of sight.
func Example() {
	layout := arms.Layout{
		R0:         8.15,
		WidthSlope: 0.02,
		Arms: []arms.Arm{
			{Name: "Corvid", RRef: 7.2, Pitch: 12 * deg, BetaStart: -40 * deg, BetaEnd: 210 * deg, Width: 0.25},
			{Name: "Lantern", RRef: 10.1, BetaRef: 15 * deg, Pitch: 9 * deg, Kinked: true, Pitch2: 16 * deg,
				BetaKink: 60 * deg, BetaStart: -70 * deg, BetaEnd: 400 * deg, Width: 0.3},
		},
	}
	dens, err := arms.NewDensity(layout)
	if err != nil {
		fmt.Println(err)
		return
	}
	logRho := make([]float64, dens.NumArms()+1) // field, Corvid, Lantern
	R, beta := arms.Galactocentric(layout.R0, 2.0*math.Cos(30*deg), 2.0*math.Sin(30*deg))
	dens.LogDensities(logRho, R, beta)
	fmt.Printf("R = %.3f kpc, β = %.2f°, ln ρ = %.2f\n", R, beta/deg, logRho)

	var hits []arms.Crossing
	for _, a := range layout.Arms {
		hits, err = a.Crossings(hits[:0], layout.R0, 30*deg, 20, 0)
		if err != nil {
			fmt.Println(err)
			return
		}
		for _, c := range hits {
			fmt.Printf("%s crosses l = 30° at d = %.2f kpc (R = %.2f kpc)\n", a.Name, c.D, c.R)
		}
	}
}
