//go:build ignore

// gen_inplane_table writes inplane_lnl.csv: ln L_i of every source of mock.csv under the
// in-plane likelihood (the form of vertical = "none" without a selection) as computed by
// mirabilis before the vertical layer and the survey selection were added, so that a test
// can hold the in-plane form to it. Run it from a checkout of that version (commit
// 576173e), with the parameter files of that version (without scale_height and z_sun):
//
//	go run testdata/likelihood/gen_inplane_table.go DIR_OF_OLD_PARAMS > testdata/likelihood/inplane_lnl.csv
//
// For each variant the quadratures are laid out at the truth alone and ln L_i is evaluated
// at the truth and at pilot_01, pilot_02, test_00 and test_01.
package main

import (
	"encoding/json"
	"fmt"
	"os"
	"path/filepath"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
)

const dir = "testdata/likelihood"

func main() {
	if err := run(os.Args[1]); err != nil {
		fmt.Fprintln(os.Stderr, err)
		os.Exit(1)
	}
}

func run(paramDir string) error {
	data, err := os.ReadFile(filepath.Join(dir, "setup.json"))
	if err != nil {
		return err
	}
	var su struct {
		RCore      float64 `json:"R_core"`
		RInner     float64 `json:"R_inner"`
		SigmaBar   float64 `json:"sigma_bar"`
		SBar       float64 `json:"s_bar"`
		SoftDeg    float64 `json:"arm_end_softening_deg"`
		FieldScale float64 `json:"field_scale_length"`
		DMin       float64 `json:"distance_min"`
		DMax       float64 `json:"distance_max"`
		StudentNu  float64 `json:"student_nu"`
		Curve      string  `json:"rotation_curve"`
		Arms       []struct {
			Name   string     `json:"name"`
			Ref    float64    `json:"ref_azimuth_deg"`
			Range  [2]float64 `json:"azimuth_range_deg"`
			Kinked bool       `json:"kinked"`
		} `json:"arms"`
	}
	if err := json.Unmarshal(data, &su); err != nil {
		return err
	}
	cat, err := catalog.ReadFile(filepath.Join(dir, "mock.csv"))
	if err != nil {
		return err
	}
	fmt.Println("# ln L_i of the in-plane likelihood before the vertical layer (gen_inplane_table.go, commit 576173e)")
	fmt.Println("variant,set,name,logL")
	for _, variant := range []string{"galaxy_gaussian", "galaxy_tolerant", "parallax_gaussian"} {
		kind, galaxy := model.ErrorsGaussian, true
		switch variant {
		case "galaxy_tolerant":
			kind = model.ErrorsTolerant
		case "parallax_gaussian":
			galaxy = false
		}
		em, err := model.NewErrorModel(kind, su.StudentNu)
		if err != nil {
			return err
		}
		spec := &model.Spec{
			Curve:         model.CurveSettings{Family: model.CurveFamily(su.Curve), RCore: su.RCore},
			Bar:           model.BarScatter{Sigma: su.SigmaBar, Scale: su.SBar, RInner: su.RInner},
			EdgeSoftening: su.SoftDeg * 3.141592653589793 / 180,
			DiskScale:     su.FieldScale,
			DMin:          su.DMin, DMax: su.DMax,
			Errors: em, Galaxy: galaxy, Tol: 1e-4,
		}
		for _, a := range su.Arms {
			spec.Arms = append(spec.Arms, model.NewArmSpec(a.Name, a.Ref, a.Range[0], a.Range[1], a.Kinked))
		}
		src, err := model.NewSources(cat, spec)
		if err != nil {
			return err
		}
		L, err := model.NewLikelihood(spec, src)
		if err != nil {
			return err
		}
		params := func(set string) (*model.Params, error) {
			v, err := model.ReadParamValues(filepath.Join(paramDir, "params_"+set+".json"))
			if err != nil {
				return nil, err
			}
			return spec.NewParams(v)
		}
		truth, err := params("truth")
		if err != nil {
			return err
		}
		if _, err := L.BuildLayouts([]*model.Params{truth}, 0); err != nil {
			return err
		}
		for _, set := range []string{"truth", "pilot_01", "pilot_02", "test_00", "test_01"} {
			p, err := params(set)
			if err != nil {
				return err
			}
			for i, s := range L.Sources {
				fmt.Printf("%s,%s,%s,%.17g\n", variant, set, s.Name, L.SourceLogL(i, p))
			}
		}
	}
	return nil
}
