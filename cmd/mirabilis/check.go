package main

import (
	"encoding/json"
	"errors"
	"flag"
	"fmt"
	"path/filepath"
	"strings"

	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
	"github.com/mirabilis-astro/mirabilis/model/fit"
)

var checkCommand = &command{
	Name:  "check",
	Usage: "CATALOG.csv | CONFIG.toml [--format text|json] [--quiet]",
	Short: "validate a catalog, or a configuration and its catalog",
	Long: `Check reads a source catalog (see "mirabilis help catalog") and either prints a
short summary of it — how many sources, which kinematic terms they carry, the range
of parallax significance, the sky coverage, the arm labels — or lists every problem
found, each with the file, line, column, offending value and what was expected.

Given a run configuration (a file ending in .toml, see "mirabilis help config"),
check reads it, then the catalog it names, and checks that the two fit together
(every arm label names an arm of the configuration): everything fit checks before
it starts, without starting. It lists every problem with its line and key, or
summarises the model and the catalog.

With --format json the report is one JSON object: file, kind ("catalog" or
"configuration"), valid (true or false), problems (an array of objects with file,
line, column, column_name, value, key and message, each present where it applies),
more_problems (problems found but not listed), warnings (things read that look
like mistakes, as objects like those of problems), catalog (the catalog's summary:
file, sources, equatorial and galactic (sources, lon_min, lon_max, lon_span,
lat_min, lat_max), pmra, pmdec, pml, pmb, vlsr, vhelio, labelled, arms (label to
count), negative_parallaxes, significance (min, median, max)) and, for a
configuration, configuration (rotation_curve, arms, parameters, sampled_dimensions,
catalog, output).

The exit status is 0 when everything is valid and 1 when anything has problems: a
catalog with any bad row is refused whole by every command, never half-read.`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o checkOptions
		fs.BoolVar(&o.quiet, "quiet", false, "print nothing when everything is valid; only the exit status tells")
		fs.StringVar(&o.format, "format", "text", "output `FORMAT`: text or json")
		return func(env *runEnv, args []string) error { return runCheck(env, &o, args) }
	},
}

type checkOptions struct {
	quiet  bool
	format string
}

// checkReport is what check found, as "check --format json" writes it.
type checkReport struct {
	File          string          `json:"file"`
	Kind          string          `json:"kind"`
	Valid         bool            `json:"valid"`
	Problems      []checkProblem  `json:"problems"`
	MoreProblems  int             `json:"more_problems"`
	Warnings      []checkProblem  `json:"warnings"`
	Catalog       *catalogSummary `json:"catalog,omitempty"`
	Configuration *configSummary  `json:"configuration,omitempty"`

	catalogText string // the catalog's summary in words
}

// checkProblem is one problem of a catalog or a configuration.
type checkProblem struct {
	File       string `json:"file,omitempty"`
	Line       int    `json:"line,omitempty"`
	Column     int    `json:"column,omitempty"`
	ColumnName string `json:"column_name,omitempty"`
	Value      string `json:"value,omitempty"`
	Key        string `json:"key,omitempty"`
	Message    string `json:"message"`

	text string // the problem as one line of text
}

type catalogSummary struct {
	File               string         `json:"file"`
	Sources            int            `json:"sources"`
	Equatorial         skyCoverage    `json:"equatorial"`
	Galactic           skyCoverage    `json:"galactic"`
	PMRA               int            `json:"pmra"`
	PMDec              int            `json:"pmdec"`
	PML                int            `json:"pml"`
	PMB                int            `json:"pmb"`
	VLSR               int            `json:"vlsr"`
	VHelio             int            `json:"vhelio"`
	Labelled           int            `json:"labelled"`
	Arms               map[string]int `json:"arms"`
	NegativeParallaxes int            `json:"negative_parallaxes"`
	Significance       struct {
		Min    float64 `json:"min"`
		Median float64 `json:"median"`
		Max    float64 `json:"max"`
	} `json:"significance"`
}

type skyCoverage struct {
	Sources int     `json:"sources"`
	LonMin  float64 `json:"lon_min"`
	LonMax  float64 `json:"lon_max"`
	LonSpan float64 `json:"lon_span"`
	LatMin  float64 `json:"lat_min"`
	LatMax  float64 `json:"lat_max"`
}

type configSummary struct {
	RotationCurve     string   `json:"rotation_curve"`
	Arms              []string `json:"arms"`
	Parameters        int      `json:"parameters"`
	SampledDimensions int      `json:"sampled_dimensions"`
	Catalog           string   `json:"catalog"`
	Output            string   `json:"output"`
}

func runCheck(env *runEnv, o *checkOptions, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one catalog or configuration file, got %d arguments", len(args))
	}
	if o.format != "text" && o.format != "json" {
		return usageErrorf("--format %q: want text or json", o.format)
	}
	path := args[0]
	rep := &checkReport{File: path, Kind: "catalog", Problems: []checkProblem{}, Warnings: []checkProblem{}}
	if strings.EqualFold(filepath.Ext(path), ".toml") {
		rep.Kind = "configuration"
		checkConfig(rep, path)
	} else {
		checkCatalog(rep, path)
	}
	rep.Valid = len(rep.Problems) == 0 && rep.MoreProblems == 0
	if o.format == "text" {
		for _, w := range rep.Warnings {
			fmt.Fprintf(env.stderr, "warning: %s\n", w.text)
		}
	}
	switch {
	case o.format == "json":
		enc := json.NewEncoder(env.stdout)
		enc.SetIndent("", "  ")
		if err := enc.Encode(rep); err != nil {
			return err
		}
	case !rep.Valid:
		if rep.Kind == "catalog" && len(rep.Problems)+rep.MoreProblems > 1 {
			fmt.Fprintf(env.stderr, "%s: catalog refused, %d problems:\n", path, len(rep.Problems)+rep.MoreProblems)
		}
		for _, p := range rep.Problems {
			fmt.Fprintln(env.stderr, p.text)
		}
		if rep.MoreProblems > 0 {
			fmt.Fprintf(env.stderr, "and %d more\n", rep.MoreProblems)
		}
	case o.quiet:
	default:
		if c := rep.Configuration; c != nil {
			fmt.Fprintf(env.stdout, "%s: valid configuration\n%s rotation curve, %d arms (%s), %d parameters, %d sampled dimensions\nrun directory: %s\n",
				path, c.RotationCurve, len(c.Arms), strings.Join(c.Arms, ", "), c.Parameters, c.SampledDimensions, c.Output)
		}
		if rep.Catalog != nil {
			fmt.Fprintf(env.stdout, "%s: valid catalog\n%s\n", rep.Catalog.File, strings.TrimRight(rep.catalogText, "\n"))
		}
	}
	if !rep.Valid {
		return exitError{1}
	}
	return nil
}

// checkCatalog reads the catalog at path into the report.
func checkCatalog(rep *checkReport, path string) *catalog.Catalog {
	cat, err := catalog.ReadFile(path)
	if err != nil {
		var ce *catalog.Error
		if !errors.As(err, &ce) {
			rep.Problems = append(rep.Problems, checkProblem{File: path, Message: err.Error(), text: err.Error()})
			return nil
		}
		for _, p := range ce.Problems {
			rep.Problems = append(rep.Problems, checkProblem{File: p.File, Line: p.Line, Column: p.Column,
				ColumnName: p.ColumnName, Value: p.Value, Message: p.Reason, text: p.String()})
		}
		rep.MoreProblems += ce.More
		return nil
	}
	for _, p := range cat.Warnings {
		rep.Warnings = append(rep.Warnings, checkProblem{File: p.File, Line: p.Line, Message: p.Reason, text: p.String()})
	}
	s := cat.Summary()
	cs := &catalogSummary{File: path, Sources: s.Sources,
		Equatorial: skyCoverage(s.Equatorial), Galactic: skyCoverage(s.Galactic),
		PMRA: s.PMRA, PMDec: s.PMDec, PML: s.PML, PMB: s.PMB, VLSR: s.VLSR, VHelio: s.VHelio,
		Labelled: s.Labelled, Arms: map[string]int{}, NegativeParallaxes: s.NegativeParallax}
	for _, a := range s.Arms {
		cs.Arms[a.Arm] = a.Sources
	}
	cs.Significance.Min, cs.Significance.Median, cs.Significance.Max = s.MinSignificance, s.MedianSignificance, s.MaxSignificance
	rep.Catalog, rep.catalogText = cs, s.String()
	return cat
}

// checkConfig reads the configuration at path and the catalog it names into the report,
// and checks that they fit together.
func checkConfig(rep *checkReport, path string) {
	cfg, err := config.Load(path)
	if err != nil {
		var list config.Errors
		if !errors.As(err, &list) {
			rep.Problems = append(rep.Problems, checkProblem{File: path, Message: err.Error(), text: err.Error()})
			return
		}
		for _, e := range list {
			rep.Problems = append(rep.Problems, checkProblem{File: e.File, Line: e.Line, Key: e.Key, Message: e.Msg, text: e.Error()})
		}
		return
	}
	cat := checkCatalog(rep, cfg.Catalog)
	if cat == nil {
		return
	}
	job, err := fit.Prepare(cfg, cat)
	if err != nil {
		rep.Problems = append(rep.Problems, checkProblem{File: path, Message: err.Error(), text: fmt.Sprintf("%s: %v", path, err)})
		return
	}
	cs := &configSummary{RotationCurve: string(cfg.Rotation.Curve), Arms: []string{},
		Parameters: len(cfg.ParamNames()), SampledDimensions: job.Post.Dim(), Catalog: cfg.Catalog, Output: cfg.Output}
	for _, a := range cfg.Arms {
		cs.Arms = append(cs.Arms, a.Name)
	}
	rep.Configuration = cs
}
