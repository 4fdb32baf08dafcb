package fit

import (
	"math"

	"github.com/mirabilis-astro/mirabilis/model"
)

// Evaluation is the model evaluated at one set of parameter values.
type Evaluation struct {
	// LogPrior is the log prior density at the values, −Inf outside the prior.
	LogPrior float64
	// LogLikelihood is the total log-likelihood of the sources the fit keeps.
	LogLikelihood float64
	// Outside lists the free parameters whose values their priors do not allow.
	Outside []OutsidePrior
	// Sources are the catalog's sources in order.
	Sources []SourceEvaluation
}

// OutsidePrior is a parameter value that its prior does not allow.
type OutsidePrior struct {
	Name  string
	Value float64
	// Prior is the prior's expression; Low and High bound the values it allows (±Inf on an
	// unbounded side).
	Prior     string
	Low, High float64
}

// SourceEvaluation is one source's part of an Evaluation.
type SourceEvaluation struct {
	Name string
	// LogLikelihood is the source's log-likelihood, counted in the total unless the source
	// is left out of the fit.
	LogLikelihood float64
	// Membership holds the probabilities of the membership components, field first (see
	// model.Spec.ComponentName).
	Membership []float64
}

// Evaluate lays out the quadratures at the given parameter values and evaluates the model
// there. Parameters the configuration fixes take their fixed values unless given; every
// free parameter and, in the galaxy mode, every membership fraction must be given.
func Evaluate(job *Job, given map[string]float64) (*Evaluation, error) {
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
	ev := &Evaluation{LogPrior: job.Post.LogPrior(x)}
	for i, n := range names {
		v, ok := values[n]
		if !ok || priors[i].IsFixed() {
			continue
		}
		if lo, hi := priors[i].Support(); v < lo || v > hi || math.IsInf(priors[i].LogProb(v), -1) {
			ev.Outside = append(ev.Outside, OutsidePrior{Name: n, Value: v, Prior: priors[i].String(), Low: lo, High: hi})
		}
	}
	for i, s := range job.Like.Sources {
		memb := make([]float64, job.Spec.NumComponents())
		ll := job.Like.SourceDetail(i, p, memb)
		if !job.Like.Excluded[i] {
			ev.LogLikelihood += ll
		}
		ev.Sources = append(ev.Sources, SourceEvaluation{Name: s.Name, LogLikelihood: ll, Membership: memb})
	}
	return ev, nil
}
