package main

import (
	"encoding/csv"
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"os"
	"strconv"
	"strings"
	"text/tabwriter"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/fit"
	"github.com/mirabilis-astro/mirabilis/model/param"
)

var predictCommand = &command{
	Name:  "predict",
	Usage: "--params PARAMS.json --at PLACES.csv [--config CONFIG.toml] [--format csv|json] [--core-radius KPC]",
	Short: "predict what sources at given places would be seen to do",
	Long: `Predict computes, for a parameter set and a list of places in the Galaxy, what a
source at each place would be seen to do if it moved exactly with the model: its
Galactocentric radius and azimuth, the circular speed there, its proper motions in
equatorial and Galactic coordinates and its line-of-sight velocity, heliocentric and
in the radio LSR.

PARAMS.json is a parameter file (see "mirabilis help params") or a run's
summary.json, whose posterior medians are then used.

PLACES.csv ("-" for standard input) is read like a catalog (see "mirabilis help
catalog": comments, quoting, sexagesimal ra and dec, problems named by line and
column) with the columns ra,dec (ICRS) or l,b (Galactic) in degrees, and distance
(kpc); a name column is optional.

The rotation curve's family follows from the parameter names. A nodes curve
(Theta_1 …) needs its node radii: --config takes them, with the interpolation and
the core radius, from the run's configuration. Without --config the core radius is
--core-radius.

The output has one row (csv) or one object (json) per place with the keys
  name, l, b, ra, dec (deg), distance (kpc), R (kpc), beta (deg), theta (km/s),
  pmra, pmdec, pml, pmb (mas/yr; pmra = μα cos δ, pml = μl cos b),
  vhelio, vlsr (km/s).`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o predictOptions
		fs.StringVar(&o.params, "params", "", "`PARAMS.json`: parameter values, a JSON object keyed by name, or a run's summary.json (required)")
		fs.StringVar(&o.at, "at", "", "`PLACES.csv`: the places, CSV with l,b or ra,dec and distance; - for standard input (required)")
		fs.StringVar(&o.config, "config", "", "`CONFIG.toml` whose rotation-curve settings (node radii, interpolation, core radius) to use")
		fs.StringVar(&o.format, "format", "csv", "output `FORMAT`: csv or json")
		fs.Float64Var(&o.coreRadius, "core-radius", model.DefaultCoreRadius, "radius `KPC` inside which the rotation rises as a solid body, without --config")
		return func(env *runEnv, args []string) error { return runPredict(env, &o, args) }
	},
}

type predictOptions struct {
	params, at, config, format string
	coreRadius                 float64
}

var paramsHelp = `A parameter file is a JSON object of parameter values keyed by name, for
example the true values of the demo galaxy ("mirabilis demo")

	{"R0": 8.25, "Theta0": 232, "dTheta_dR": -0.6,
	 "Usun": 10.5, "Vsun": 12.5, "Wsun": 7.5, "Us": 2, "Vs": -3, "Ws": 0,
	 "sigma_vir": 6}

It is read by "mirabilis predict" and "mirabilis eval", which also take a run's
summary.json and use its posterior medians. The names are those of the
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
	values, err := fit.ReadValues(paramsPath)
	if err != nil {
		return err
	}
	curve := model.CurveSettings{RCore: o.coreRadius}
	if o.config != "" {
		cfg, err := config.Load(o.config)
		if err != nil {
			return err
		}
		curve = fit.CurveFromConfig(cfg)
	}
	motion, _, err := model.MotionFromParams(values, curve)
	if err != nil {
		if _, nodes := values[param.NodeName(1)]; nodes && o.config == "" {
			return fmt.Errorf("%s: a nodes rotation curve needs its node radii: give the run's configuration with --config", paramsPath)
		}
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

// readPoints reads the places file of predict ("-" for standard input) with the catalog
// reader and converts each position to both frames.
func readPoints(path string) ([]point, error) {
	var places []catalog.Place
	var err error
	if path == "-" {
		places, err = catalog.ReadPlaces(os.Stdin, "standard input")
	} else {
		places, err = catalog.ReadPlacesFile(path)
	}
	if err != nil {
		return nil, err
	}
	out := make([]point, len(places))
	for i, pl := range places {
		p := point{name: pl.Name, distance: pl.Distance}
		if p.name == "" {
			p.name = fmt.Sprintf("point-%d", i+1)
		}
		if pl.Frame == catalog.Galactic {
			p.l, p.b = pl.Lon, pl.Lat
			p.ra, p.de = model.GalacticToICRS(p.l, p.b)
			p.sight = model.NewSightline(p.l, p.b)
		} else {
			p.ra, p.de = pl.Lon, pl.Lat
			p.l, p.b = model.ICRSToGalactic(p.ra, p.de)
			p.sight = model.NewSightlineICRS(p.ra, p.de)
		}
		out[i] = p
	}
	return out, nil
}
