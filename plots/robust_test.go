package plots

import (
	"fmt"
	"testing"

	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"
	"gonum.org/v1/plot/vg/recorder"
)

// TestOddCanvasSizes draws every figure onto very small and very elongated
// canvases: the layout may get cramped but must not panic.
func TestOddCanvasSizes(t *testing.T) {
	fm, err := FaceOnMap(MapData{R0: testR0, Arms: testTracks(), Sources: testSources(20, 7), MotionScale: 0.02})
	if err != nil {
		t.Fatal(err)
	}
	rc, err := RotationCurvePlot(testCurve())
	if err != nil {
		t.Fatal(err)
	}
	names := make([]string, 12)
	for j := range names {
		names[j] = fmt.Sprintf("Vireo_%d", j)
	}
	draws := make([][]float64, 200)
	for i := range draws {
		draws[i] = make([]float64, len(names))
		for j := range draws[i] {
			draws[i][j] = float64((i*7+j*13)%31) + float64(j)
		}
	}
	cp, err := NewPairsPlot(PairsData{Names: names, Samples: draws})
	if err != nil {
		t.Fatal(err)
	}
	tp, err := NewTracePlot(TraceData{Names: names, Chain: testChain(100, 4, len(names), 8), BurnIn: 10})
	if err != nil {
		t.Fatal(err)
	}
	mp, err := NewMembershipPlot(MembershipData{Arms: testArmList(), Sources: testMembers(200)})
	if err != nil {
		t.Fatal(err)
	}
	figs := map[string]Figure{"map": fm, "curve": rc, "pairs": cp, "trace": tp, "membership": mp}
	for name, f := range figs {
		for _, wh := range [][2]vg.Length{{40, 40}, {1500, 60}, {60, 1500}, {1, 1}} {
			func() {
				defer func() {
					if r := recover(); r != nil {
						t.Errorf("%s on %v pt: panic %v", name, wh, r)
					}
				}()
				f.Draw(draw.NewCanvas(new(recorder.Canvas), wh[0], wh[1]))
			}()
		}
	}
}
