package main

import (
	"errors"
	"flag"
	"fmt"
	"strings"

	"github.com/mirabilis-astro/mirabilis/model/catalog"
)

var checkCommand = &command{
	Name:  "check",
	Usage: "CATALOG.csv",
	Short: "validate a catalog and summarise it",
	Long: `Check reads a source catalog (see "mirabilis help catalog") and either prints a
short summary of it — how many sources, which kinematic terms they carry, the range
of parallax significance, the sky coverage, the arm labels — or lists every problem
found, each with the file, line, column, offending value and what was expected.

The exit status is 0 for a valid catalog and 1 for a catalog with problems: a
catalog with any bad row is refused whole by every command, never half-read.`,
	Flags: func(fs *flag.FlagSet) runFunc {
		var o checkOptions
		fs.BoolVar(&o.quiet, "quiet", false, "print nothing for a valid catalog; only the exit status tells")
		return func(env *runEnv, args []string) error { return runCheck(env, &o, args) }
	},
}

type checkOptions struct {
	quiet bool
}

func runCheck(env *runEnv, o *checkOptions, args []string) error {
	if len(args) != 1 {
		return usageErrorf("want exactly one catalog file, got %d arguments", len(args))
	}
	cat, err := catalog.ReadFile(args[0])
	if err != nil {
		var ce *catalog.Error
		if errors.As(err, &ce) {
			fmt.Fprintln(env.stderr, strings.TrimRight(ce.Error(), "\n"))
			return exitError{1}
		}
		return err
	}
	if o.quiet {
		return nil
	}
	fmt.Fprintf(env.stdout, "%s: valid catalog\n%s", args[0], strings.TrimRight(cat.Summary().String(), "\n")+"\n")
	return nil
}
