package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"text/tabwriter"

	"github.com/mirabilis-astro/mirabilis/model"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

func init() {
	register(&command{
		Name:  "eval",
		Usage: "CONFIG.toml --params PARAMS.json [--format text|json]",
		Short: "evaluate the prior and likelihood at given parameter values",
		Long: `Eval evaluates the model of CONFIG.toml at the parameter values in PARAMS.json
(see "mirabilis help params"): the log prior, the total log-likelihood, and each
source's log-likelihood and membership probabilities. Each source's distance
quadrature is laid out for exactly these values, to the configuration's tolerance.

Parameters the configuration fixes take their fixed values unless PARAMS.json gives
them; every free parameter and, in the galaxy mode, every membership fraction
(f_field, f_NAME) must be given.

With --format json the output is an object with the keys log_prior,
log_likelihood and sources, an array of objects with name, log_likelihood and
membership (an object from component — "field" or an arm's name — to probability).`,
		SetFlags: func(fs *flag.FlagSet) {
			fs.String("params", "", "`PARAMS.json`: parameter values, a JSON object keyed by name (required)")
			fs.String("format", "text", "output `FORMAT`: text or json")
		},
		Run: runEval,
	})
}

type evalSource struct {
	Name          string             `json:"name"`
	LogLikelihood float64            `json:"log_likelihood"`
	Membership    map[string]float64 `json:"membership"`
}

type evalResult struct {
	LogPrior      float64      `json:"log_prior"`
	LogLikelihood float64      `json:"log_likelihood"`
	Sources       []evalSource `json:"sources"`
}

func runEval(env *runEnv, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one configuration file, got %d arguments", len(args))
	}
	paramsPath := env.flags.Lookup("params").Value.String()
	format := env.flags.Lookup("format").Value.String()
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
	given, err := model.ReadParamValues(paramsPath)
	if err != nil {
		return err
	}
	cat, err := catalog.ReadFile(cfg.Catalog)
	if err != nil {
		return err
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
	fmt.Fprintf(env.stdout, "log prior       %.6f\nlog likelihood  %.6f\n\n", res.LogPrior, res.LogLikelihood)
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

// evaluate lays out the quadratures at the given values and evaluates the model there.
func evaluate(job *fit.Job, given map[string]float64) (*evalResult, error) {
	values := map[string]float64{}
	names, priors := job.Config.ParamNames(), job.Config.Priors()
	for i, n := range names {
		if priors[i].IsFixed() {
			values[n] = priors[i].Quantile(0.5)
		}
	}
	for n, v := range given {
		values[n] = v
	}
	p, err := job.Spec.NewParams(values)
	if err != nil {
		return nil, err
	}
	x, err := job.Post.Point(values)
	if err != nil {
		return nil, err
	}
	if _, err := job.Like.BuildLayouts([]*model.Params{p}, job.Config.Sampler.Threads); err != nil {
		return nil, err
	}
	res := &evalResult{LogPrior: job.Post.LogPrior(x)}
	memb := make([]float64, job.Spec.NumComponents())
	for i, s := range job.Like.Sources {
		ll := job.Like.SourceDetail(i, p, memb)
		es := evalSource{Name: s.Name, LogLikelihood: ll, Membership: map[string]float64{}}
		for m, v := range memb {
			es.Membership[job.Spec.ComponentName(m)] = v
		}
		if !job.Like.Excluded[i] {
			res.LogLikelihood += ll
		}
		res.Sources = append(res.Sources, es)
	}
	return res, nil
}
