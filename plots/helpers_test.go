package plots

import (
	"bytes"
	"image/png"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strings"
	"testing"

	"gonum.org/v1/plot/vg"
)

// The invented model galaxy of the tests: R0 = 8.2 kpc and four
// log-periodic arms named by us, ln R = ln Rref − β tan ψ.
const testR0 = 8.2

type testArm struct {
	name           string
	rref, pitchDeg float64
	width          float64
	b0, b1         float64 // azimuth range, degrees
}

var testArms = []testArm{
	{"Corvid", 5.1, 12, 0.3, -40, 220},
	{"Lantern", 6.9, 11, 0.35, -30, 240},
	{"Tamarisk", 9.2, 13, 0.3, -60, 180},
	{"Halcyon", 11.5, 9, 0.4, -50, 150},
}

func (a testArm) r(beta float64) float64 {
	return a.rref * math.Exp(-beta*math.Tan(a.pitchDeg*math.Pi/180))
}

func testTracks() []ArmTrack {
	var out []ArmTrack
	for _, a := range testArms {
		t := ArmTrack{Arm: Arm{Name: a.name}}
		for b := a.b0; b <= a.b1; b += 5 {
			beta := b * math.Pi / 180
			r := a.r(beta)
			t.Centre = append(t.Centre, Polar{R: r, Beta: beta})
			t.Inner = append(t.Inner, Polar{R: r - a.width, Beta: beta})
			t.Outer = append(t.Outer, Polar{R: r + a.width, Beta: beta})
		}
		out = append(out, t)
	}
	return out
}

// fromHelio converts heliocentric in-plane coordinates (kpc; x toward the
// centre, y toward l = 90°) to Galactocentric (R, β) by the definition
// β = atan2(y, R0 − x) of the project's model description.
func fromHelio(x, y float64) Polar {
	return Polar{R: math.Hypot(testR0-x, y), Beta: math.Atan2(y, testR0-x)}
}

// testSources returns n invented sources scattered about the test arms,
// with membership probabilities, distance ranges and motions.
func testSources(n int, seed uint64) []MapSource {
	rng := rand.New(rand.NewPCG(seed, 99))
	var out []MapSource
	for len(out) < n {
		k := rng.IntN(len(testArms) + 1)
		var p Polar
		if k == 0 {
			p = Polar{R: 3 + 8*rng.Float64(), Beta: (rng.Float64()*120 - 40) * math.Pi / 180}
		} else {
			a := testArms[k-1]
			beta := (a.b0 + rng.Float64()*(a.b1-a.b0)) * math.Pi / 180
			p = Polar{R: a.r(beta) + a.width*rng.NormFloat64(), Beta: beta}
		}
		hx, hy := testR0-p.R*math.Cos(p.Beta), p.R*math.Sin(p.Beta)
		d := math.Hypot(hx, hy)
		if d < 0.2 || d > 12 {
			continue
		}
		f := 0.05 + 0.1*rng.Float64()
		prob := make([]float64, len(testArms)+1)
		var sum float64
		for i := range prob {
			prob[i] = 0.3 * rng.Float64()
			if i == k {
				prob[i] += 1 + rng.Float64()
			}
			sum += prob[i]
		}
		for i := range prob {
			prob[i] /= sum
		}
		tied := 0
		if k > 0 && rng.IntN(5) == 0 {
			tied = k
		}
		out = append(out, MapSource{
			Name:    "src" + string(rune('A'+len(out)%26)),
			At:      p,
			Near:    fromHelio(hx*(1-f), hy*(1-f)),
			Far:     fromHelio(hx*(1+f), hy*(1+f)),
			Prob:    prob,
			TiedArm: tied,
			Motion:  &MapVelocity{U: 8 * rng.NormFloat64(), V: 8 * rng.NormFloat64(), W: 3 * rng.NormFloat64()},
		})
	}
	return out
}

func testArmList() []Arm {
	var out []Arm
	for _, a := range testArms {
		out = append(out, Arm{Name: a.name})
	}
	return out
}

// saveBoth saves f as PNG and SVG into a temporary folder and checks that
// each file is a well-formed, non-blank image of the requested size.
func saveBoth(t *testing.T, f Figure, w, h vg.Length) {
	t.Helper()
	dir := t.TempDir()
	pngPath := filepath.Join(dir, "fig.png")
	if err := Save(f, pngPath, w, h); err != nil {
		t.Fatalf("saving PNG: %v", err)
	}
	raw, err := os.ReadFile(pngPath)
	if err != nil {
		t.Fatal(err)
	}
	img, err := png.Decode(bytes.NewReader(raw))
	if err != nil {
		t.Fatalf("decoding PNG: %v", err)
	}
	// MIRABILIS_FIGURES names a folder to keep the tests' figures in, for looking at.
	if keep := os.Getenv("MIRABILIS_FIGURES"); keep != "" {
		os.WriteFile(filepath.Join(keep, strings.ReplaceAll(t.Name(), "/", "_")+".png"), raw, 0o644)
	}
	wantW := int(math.Ceil(float64(w/vg.Inch) * PNGDPI))
	if got := img.Bounds().Dx(); got < wantW-1 || got > wantW+1 {
		t.Errorf("PNG width %d px, want %d", got, wantW)
	}
	// Some pixel must differ from white: the figure was drawn.
	drawn := false
	b := img.Bounds()
	for y := b.Min.Y; y < b.Max.Y && !drawn; y += 3 {
		for x := b.Min.X; x < b.Max.X; x += 3 {
			r, g, bb, _ := img.At(x, y).RGBA()
			if r < 0xF000 || g < 0xF000 || bb < 0xF000 {
				drawn = true
				break
			}
		}
	}
	if !drawn {
		t.Error("PNG is blank")
	}
	svgPath := filepath.Join(dir, "fig.svg")
	if err := Save(f, svgPath, w, h); err != nil {
		t.Fatalf("saving SVG: %v", err)
	}
	svg, err := os.ReadFile(svgPath)
	if err != nil {
		t.Fatal(err)
	}
	if !strings.Contains(string(svg), "<svg") || len(svg) < 1000 {
		t.Errorf("SVG looks empty (%d bytes)", len(svg))
	}
	// Embedded images are PNG and say so (image/png, RFC 2083 and the
	// IANA media-type registry); fonts are embedded.
	if strings.Contains(string(svg), "data:image/jpg;base64,iVBOR") {
		t.Error("SVG labels a PNG image as image/jpg")
	}
	if !strings.Contains(string(svg), "@font-face") {
		t.Error("SVG does not embed its font")
	}
}
