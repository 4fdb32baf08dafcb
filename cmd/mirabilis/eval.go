package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"math"
	"text/tabwriter"

	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

var evalCommand = &command{
	Name:  "eval",
	Usage: "CONFIG.toml --params PARAMS.json [--format text|json]",
	Short: "evaluate the prior and likelihood at given parameter values",
	Long: `Eval evaluates the model of CONFIG.toml at the parameter values in PARAMS.json
(see "mirabilis help params"; a run's summary.json gives its posterior medians):
the log prior, the total log-likelihood, and each source's log-likelihood and
membership probabilities. Each source's distance quadrature is laid out for
exactly these values, to the configuration's tolerance.

Parameters the configuration fixes take their fixed values unless PARAMS.json gives
them; every free parameter and, in the galaxy mode, every membership fraction
(f_field, f_NAME) must be given.

A parameter outside its prior gives a log prior of −Inf; eval then names each such
parameter, its value and the range its prior allows, and still evaluates the
likelihood.

With --format json the output is an object with the keys log_prior,
log_likelihood, outside_prior and sources. log_prior is null when a value lies
outside its prior, and outside_prior lists each such parameter as an object with
name, value, prior (the prior's expression) and low and high, the bounds the prior
allows (null on an unbounded side); it is empty when every value is allowed.
sources is an array of objects with name, log_likelihood and membership (an
object from component — "field" or an arm's name — to probability). Any
log-likelihood that is not a finite number is written as null.`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o evalOptions
		fs.StringVar(&o.params, "params", "", "`PARAMS.json`: parameter values, a JSON object keyed by name (required)")
		fs.StringVar(&o.format, "format", "text", "output `FORMAT`: text or json")
		return func(env *runEnv, args []string) error { return runEval(env, &o, args) }
	},
}

type evalOptions struct {
	params, format string
}

type evalSource struct {
	Name          string             `json:"name"`
	LogLikelihood jsonNumber         `json:"log_likelihood"`
	Membership    map[string]float64 `json:"membership"`
}

type evalResult struct {
	LogPrior      jsonNumber     `json:"log_prior"`
	LogLikelihood jsonNumber     `json:"log_likelihood"`
	OutsidePrior  []outsideValue `json:"outside_prior"`
	Sources       []evalSource   `json:"sources"`
}

// outsideValue is a parameter value that its prior does not allow.
type outsideValue struct {
	Name  string     `json:"name"`
	Value float64    `json:"value"`
	Prior string     `json:"prior"`
	Low   jsonNumber `json:"low"`  // null when unbounded below
	High  jsonNumber `json:"high"` // null when unbounded above
}

// String says in words what is wrong, e.g. "R0 = 12 is outside its prior uniform(6.5, 10),
// which allows 6.5 to 10".
func (o outsideValue) String() string {
	lo, hi := float64(o.Low), float64(o.High)
	var allowed string
	switch {
	case math.IsInf(lo, -1) && math.IsInf(hi, 1):
		allowed = "any value"
	case math.IsInf(lo, -1):
		allowed = fmt.Sprintf("values up to %g", hi)
	case math.IsInf(hi, 1):
		allowed = fmt.Sprintf("values from %g", lo)
	default:
		allowed = fmt.Sprintf("%g to %g", lo, hi)
	}
	return fmt.Sprintf("%s = %g is outside its prior %s, which allows %s", o.Name, o.Value, o.Prior, allowed)
}

// jsonNumber is a float64 that JSON writes as null when it is not a finite number, which
// JSON cannot hold.
type jsonNumber float64

// MarshalJSON writes the number, or null for ±Inf and NaN.
func (x jsonNumber) MarshalJSON() ([]byte, error) {
	f := float64(x)
	if math.IsInf(f, 0) || math.IsNaN(f) {
		return []byte("null"), nil
	}
	return json.Marshal(f)
}

func runEval(env *runEnv, o *evalOptions, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one configuration file, got %d arguments", len(args))
	}
	paramsPath, format := o.params, o.format
	if paramsPath == "" {
		return usageErrorf("--params is required")
	}
	if format != "text" && format != "json" {
		return usageErrorf("--format %q: want text or json", format)
	}
	cfg, err := config.Load(args[0])
	if err != nil {
		return err
	}
	given, err := fit.ReadValues(paramsPath)
	if err != nil {
		return err
	}
	cat, err := catalog.ReadFile(cfg.Catalog)
	if err != nil {
		return err
	}
	for _, w := range cat.Warnings {
		fmt.Fprintf(env.stderr, "warning: %s\n", w)
	}
	job, err := fit.Prepare(cfg, cat)
	if err != nil {
		return err
	}
	res, err := evaluate(job, given)
	if err != nil {
		return fmt.Errorf("%s: %w", paramsPath, err)
	}
	if format == "json" {
		enc := json.NewEncoder(env.stdout)
		enc.SetIndent("", "  ")
		return enc.Encode(res)
	}
	fmt.Fprintf(env.stdout, "log prior       %.6f", res.LogPrior)
	switch len(res.OutsidePrior) {
	case 0:
		if math.IsInf(float64(res.LogPrior), -1) {
			fmt.Fprint(env.stdout, ": a derived quantity is outside its prior under [derived_priors]")
		}
	case 1:
		fmt.Fprintf(env.stdout, ": %s", res.OutsidePrior[0])
	default:
		fmt.Fprint(env.stdout, ":")
		for _, o := range res.OutsidePrior {
			fmt.Fprintf(env.stdout, "\n  %s", o)
		}
	}
	fmt.Fprintf(env.stdout, "\nlog likelihood  %.6f\n\n", res.LogLikelihood)
	tw := tabwriter.NewWriter(env.stdout, 0, 0, 2, ' ', 0)
	fmt.Fprint(tw, "source\tln L")
	comps := job.Spec.NumComponents()
	for m := range comps {
		fmt.Fprintf(tw, "\tp(%s)", job.Spec.ComponentName(m))
	}
	fmt.Fprintln(tw)
	for _, s := range res.Sources {
		fmt.Fprintf(tw, "%s\t%.6f", s.Name, s.LogLikelihood)
		for m := range comps {
			fmt.Fprintf(tw, "\t%.4f", s.Membership[job.Spec.ComponentName(m)])
		}
		fmt.Fprintln(tw)
	}
	return tw.Flush()
}

// evaluate evaluates the model at the given values (fit.Evaluate) in the form eval writes.
func evaluate(job *fit.Job, given map[string]float64) (*evalResult, error) {
	ev, err := fit.Evaluate(job, given)
	if err != nil {
		return nil, err
	}
	res := &evalResult{LogPrior: jsonNumber(ev.LogPrior), LogLikelihood: jsonNumber(ev.LogLikelihood), OutsidePrior: []outsideValue{}}
	for _, o := range ev.Outside {
		res.OutsidePrior = append(res.OutsidePrior, outsideValue{Name: o.Name, Value: o.Value, Prior: o.Prior,
			Low: jsonNumber(o.Low), High: jsonNumber(o.High)})
	}
	for _, s := range ev.Sources {
		es := evalSource{Name: s.Name, LogLikelihood: jsonNumber(s.LogLikelihood), Membership: map[string]float64{}}
		for m, v := range s.Membership {
			es.Membership[job.Spec.ComponentName(m)] = v
		}
		res.Sources = append(res.Sources, es)
	}
	return res, nil
}
