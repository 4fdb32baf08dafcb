package main

import (
	"encoding/csv"
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

var predictCommand = &command{
	Name:  "predict",
	Usage: "--params PARAMS.json --at POINTS.csv [--format csv|json] [--core-radius KPC]",
	Short: "predict what sources at given places would be seen to do",
	Long: `Predict computes, for a parameter set and a list of places in the Galaxy, what a
source at each place would be seen to do if it moved exactly with the model: its
Galactocentric radius and azimuth, the circular speed there, its proper motions in
equatorial and Galactic coordinates and its line-of-sight velocity, heliocentric and
in the radio LSR (see "mirabilis help params" for the parameter file).

POINTS.csv is a CSV file with a header row and the columns l,b (deg, Galactic) or
ra,dec (deg, ICRS), and distance (kpc); a name column is optional. Lines starting
with # are comments.

The output has one row (csv) or one object (json) per point with the keys
  name, l, b, ra, dec (deg), distance (kpc), R (kpc), beta (deg), theta (km/s),
  pmra, pmdec, pml, pmb (mas/yr; pmra = μα cos δ, pml = μl cos b),
  vhelio, vlsr (km/s).`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o predictOptions
		fs.StringVar(&o.params, "params", "", "`PARAMS.json`: parameter values, a JSON object keyed by name (required)")
		fs.StringVar(&o.at, "at", "", "`POINTS.csv`: the places, CSV with l,b or ra,dec and distance (required)")
		fs.StringVar(&o.format, "format", "csv", "output `FORMAT`: csv or json")
		fs.Float64Var(&o.coreRadius, "core-radius", model.DefaultCoreRadius, "radius `KPC` inside which the rotation rises as a solid body")
		return func(env *runEnv, args []string) error { return runPredict(env, &o, args) }
	},
}

type predictOptions struct {
	params, at, format string
	coreRadius         float64
}

var paramsHelp = `A parameter file is a JSON object of parameter values keyed by name, for
example the true values of the demo galaxy ("mirabilis demo")

	{"R0": 8.25, "Theta0": 232, "dTheta_dR": -0.6,
	 "Usun": 10.5, "Vsun": 12.5, "Wsun": 7.5, "Us": 2, "Vs": -3, "Ws": 0,
	 "sigma_vir": 6}

It is read by "mirabilis predict" and "mirabilis eval". The names are those of the
run configuration, the chain file and the summaries:

` + paramTableText() + `
The rotation-curve family is told by the names present: dTheta_dR for the
linear curve, alpha for the power law, Theta_1 … for the nodes curve. Derived
quantities are reported in summaries and may take priors under
[derived_priors]; a parameter file may hold them, and they are not used.`

// paramTableText lists the parameter table (package param): name, unit, kind and meaning.
func paramTableText() string {
	var b strings.Builder
	tw := tabwriter.NewWriter(&b, 0, 0, 2, ' ', 0)
	fmt.Fprintln(tw, "  name\tunit\tkind\tmeaning")
	for _, e := range param.Table() {
		fmt.Fprintf(tw, "  %s\t%s\t%s\t%s\n", e.Name, e.Unit, e.Kind, e.Description)
	}
	tw.Flush()
	return b.String()
}

// point is one place at which to predict.
type point struct {
	name         string
	sight        model.Sightline
	l, b, ra, de float64 // deg: the position as given, and converted
	distance     float64
}

var predictKeys = []string{"name", "l", "b", "ra", "dec", "distance", "R", "beta", "theta",
	"pmra", "pmdec", "pml", "pmb", "vhelio", "vlsr"}

func runPredict(env *runEnv, o *predictOptions, args []string) error {
	if len(args) > 0 {
		return usageErrorf("unexpected argument %q", args[0])
	}
	paramsPath, atPath, format := o.params, o.at, o.format
	if paramsPath == "" || atPath == "" {
		return usageErrorf("--params and --at are both required")
	}
	if format != "csv" && format != "json" {
		return usageErrorf("--format %q: want csv or json", format)
	}
	rcore := o.coreRadius
	values, err := model.ReadParamValues(paramsPath)
	if err != nil {
		return err
	}
	motion, _, err := model.MotionFromParams(values, model.CurveSettings{RCore: rcore})
	if err != nil {
		return fmt.Errorf("%s: %w", paramsPath, err)
	}
	points, err := readPoints(atPath)
	if err != nil {
		return err
	}
	rows := make([][]float64, len(points))
	for i, p := range points {
		pr := motion.Predict(&p.sight, p.distance)
		rows[i] = []float64{p.l, p.b, p.ra, p.de, p.distance, pr.R, pr.Beta() * 180 / math.Pi, pr.Theta,
			pr.MuAlphaStar, pr.MuDelta, pr.MuLStar, pr.MuB, pr.VHelio, pr.VLSR}
	}
	if format == "json" {
		out := make([]map[string]any, len(points))
		for i, p := range points {
			o := map[string]any{"name": p.name}
			for k, v := range rows[i] {
				o[predictKeys[k+1]] = v
			}
			out[i] = o
		}
		enc := json.NewEncoder(env.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(out)
	}
	w := csv.NewWriter(env.stdout)
	w.Write(predictKeys)
	for i, p := range points {
		rec := []string{p.name}
		for _, v := range rows[i] {
			rec = append(rec, strconv.FormatFloat(v, 'g', 10, 64))
		}
		w.Write(rec)
	}
	w.Flush()
	return w.Error()
}

// readPoints reads the places file of predict: CSV with a header naming l,b or ra,dec and
// distance, and optionally name.
func readPoints(path string) ([]point, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, fmt.Errorf("reading places: %w", err)
	}
	defer f.Close()
	r := csv.NewReader(f)
	r.Comment = '#'
	r.TrimLeadingSpace = true
	header, err := r.Read()
	if err != nil {
		if errors.Is(err, io.EOF) {
			return nil, fmt.Errorf("%s: empty file: want a header row with l,b or ra,dec and distance", path)
		}
		return nil, fmt.Errorf("%s: %w", path, err)
	}
	col := map[string]int{}
	for i, h := range header {
		h = strings.ToLower(strings.TrimSpace(strings.TrimPrefix(h, "\ufeff")))
		switch h {
		case "name", "l", "b", "ra", "dec", "distance":
			if _, dup := col[h]; dup {
				return nil, fmt.Errorf("%s:1:%d: column %q appears twice", path, i+1, h)
			}
			col[h] = i
		default:
			return nil, fmt.Errorf("%s:1:%d: unknown column %q (want name, l, b, ra, dec, distance)", path, i+1, h)
		}
	}
	_, hasL := col["l"]
	_, hasB := col["b"]
	_, hasRA := col["ra"]
	_, hasDec := col["dec"]
	_, hasD := col["distance"]
	galactic := hasL && hasB
	switch {
	case !hasD:
		return nil, fmt.Errorf("%s:1: missing column distance", path)
	case galactic == (hasRA && hasDec) || hasL != hasB || hasRA != hasDec:
		return nil, fmt.Errorf("%s:1: want exactly one position pair, l,b or ra,dec", path)
	}
	var out []point
	var problems []string
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %w", path, err)
		}
		line, _ := r.FieldPos(0)
		num := func(name string, lo, hi float64) float64 {
			i := col[name]
			v, err := strconv.ParseFloat(strings.TrimSpace(rec[i]), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) || v < lo || v > hi {
				problems = append(problems, fmt.Sprintf("%s:%d:%d (%s): value %q: want a number in [%g, %g]", path, line, i+1, name, rec[i], lo, hi))
			}
			return v
		}
		p := point{name: fmt.Sprintf("point-%d", len(out)+1)}
		if i, ok := col["name"]; ok {
			p.name = rec[i]
		}
		if galactic {
			p.l, p.b = math.Mod(num("l", -360, 360)+360, 360), num("b", -90, 90)
			p.ra, p.de = model.GalacticToICRS(p.l, p.b)
			p.sight = model.NewSightline(p.l, p.b)
		} else {
			p.ra, p.de = num("ra", 0, 360), num("dec", -90, 90)
			p.l, p.b = model.ICRSToGalactic(p.ra, p.de)
			p.sight = model.NewSightlineICRS(p.ra, p.de)
		}
		p.distance = num("distance", 1e-6, 1e3)
		out = append(out, p)
	}
	if len(problems) > 0 {
		return nil, fmt.Errorf("%d problem(s) in the places file:\n  %s", len(problems), strings.Join(problems, "\n  "))
	}
	if len(out) == 0 {
		return nil, fmt.Errorf("%s: no places after the header", path)
	}
	return out, nil
}
