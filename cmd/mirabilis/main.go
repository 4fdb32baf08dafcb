// Command mirabilis fits one joint Bayesian model of the Milky Way's spiral arms, rotation
// curve, solar motion and source motions to a catalog of trigonometric parallaxes, proper
// motions and line-of-sight velocities.
//
// Run "mirabilis help" for the list of commands and "mirabilis help TOPIC" for each command
// and file format.
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"runtime"
	"runtime/debug"
	"strings"
	"text/tabwriter"

	"github.com/mirabilis-astro/mirabilis/internal/spelling"
	"github.com/mirabilis-astro/mirabilis/model/catalog"
	"github.com/mirabilis-astro/mirabilis/model/config"
)

// A command is one subcommand of the tool, in the manner of the go command: a usage line, a
// one-line summary, a long help text and its own flag set.
type command struct {
	Name  string
	Usage string // arguments after the command name, e.g. "[--out DIR] CATALOG.csv"
	Short string // one line, no final period
	Long  string // the full help text

	// Flags registers the command's flags on fs, each bound to a variable of its own, and
	// returns the function that runs the command, reading those variables, with the
	// arguments left after parsing.
	Flags func(fs *flag.FlagSet) runFunc
}

// A runFunc runs a command with the arguments left after its flags.
type runFunc func(env *runEnv, args []string) error

// A topic is a help page that is not a command, such as a file format.
type topic struct {
	Name  string
	Short string
	Text  func() string
}

// runEnv carries what a command may touch of the outside world, so that tests can run the
// commands without a process of their own.
type runEnv struct {
	ctx    context.Context
	stdout io.Writer
	stderr io.Writer
}

// errUsage marks an error in the way a command was called; the usage line follows it.
var errUsage = errors.New("usage")

// exitError carries a chosen exit status for an error already reported in full.
type exitError struct{ code int }

func (e exitError) Error() string { return fmt.Sprintf("exit status %d", e.code) }

// commands lists the commands in the order "mirabilis help" shows them: the fit and what
// it reads first, then the tools around it.
var commands = []*command{
	fitCommand,
	assignCommand,
	reportCommand,
	plotCommand,
	evalCommand,
	simulateCommand,
	checkCommand,
	predictCommand,
	compareCommand,
	batchCommand,
	demoCommand,
}

// topics lists the help pages that are not commands, in the order "mirabilis help" shows
// them.
var topics = []*topic{
	{Name: "catalog", Short: "the source catalog format (CSV)", Text: func() string { return catalog.HelpText }},
	{Name: "config", Short: "the run configuration (TOML)", Text: func() string { return config.HelpText }},
	{Name: "params", Short: "parameter files (JSON) and parameter names", Text: func() string { return paramsHelp }},
}

func lookup(name string) *command {
	for _, c := range commands {
		if c.Name == name {
			return c
		}
	}
	return nil
}

// commandNames returns the names of the commands and, if withTopics, of the help topics,
// for suggestions.
func commandNames(withTopics bool) []string {
	var names []string
	for _, c := range commands {
		names = append(names, c.Name)
	}
	if withTopics {
		for _, t := range topics {
			names = append(names, t.Name)
		}
	}
	return names
}

func main() {
	ctx, stop := stopOnSignal(os.Stderr)
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// run executes the command line args and returns the process exit status: 0 for success,
// 1 for a failure of the job (an invalid catalog, a failed fit), 2 for a usage error, 75
// (exitStopped) for a job stopped early that continues with --resume.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		printOverview(stderr)
		return 2
	}
	name := args[0]
	switch name {
	case "help", "-h", "-help", "--help":
		return runHelp(args[1:], stdout, stderr)
	case "version", "-version", "--version":
		fmt.Fprintln(stdout, versionLine())
		return 0
	}
	c := lookup(name)
	if c == nil {
		fmt.Fprintf(stderr, "mirabilis: unknown command %q%s\nRun 'mirabilis help' for the list of commands.\n", name, didYouMean(name, commandNames(false), ""))
		return 2
	}
	fs := flag.NewFlagSet(c.Name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	runCmd := c.Flags(fs)
	if err := fs.Parse(interleave(fs, args[1:])); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			printCommandHelp(stdout, c)
			return 0
		}
		fmt.Fprintf(stderr, "mirabilis %s: %s\nusage: mirabilis %s %s\nRun 'mirabilis help %s' for details.\n",
			c.Name, flagError(fs, err), c.Name, c.Usage, c.Name)
		return 2
	}
	env := &runEnv{ctx: ctx, stdout: stdout, stderr: stderr}
	err := runCmd(env, fs.Args())
	switch {
	case err == nil:
		return 0
	case errors.Is(err, errUsage):
		msg := strings.TrimSuffix(strings.TrimPrefix(err.Error(), "usage"), ": usage")
		msg = strings.TrimPrefix(msg, ": ")
		if msg != "" {
			fmt.Fprintf(stderr, "mirabilis %s: %s\n", c.Name, msg)
		}
		fmt.Fprintf(stderr, "usage: mirabilis %s %s\nRun 'mirabilis help %s' for details.\n", c.Name, c.Usage, c.Name)
		return 2
	default:
		var ee exitError
		if errors.As(err, &ee) {
			return ee.code
		}
		fmt.Fprintf(stderr, "mirabilis %s: %v\n", c.Name, err)
		return 1
	}
}

// usageErrorf reports a mistake in how a command was called.
func usageErrorf(format string, a ...any) error {
	return fmt.Errorf("%w: %s", errUsage, fmt.Sprintf(format, a...))
}

// interleave moves flags that follow positional arguments in front of them, so that
// "mirabilis check cat.csv --quiet" works as users expect. A lone "--" ends the flags.
func interleave(fs *flag.FlagSet, args []string) []string {
	var flags, rest []string
	for i := 0; i < len(args); i++ {
		a := args[i]
		if a == "--" {
			rest = append(rest, args[i+1:]...)
			break
		}
		if len(a) < 2 || a[0] != '-' {
			rest = append(rest, a)
			continue
		}
		flags = append(flags, a)
		name := strings.TrimLeft(a, "-")
		if strings.Contains(name, "=") {
			continue
		}
		f := fs.Lookup(name)
		if f == nil {
			continue
		}
		if bf, ok := f.Value.(interface{ IsBoolFlag() bool }); ok && bf.IsBoolFlag() {
			continue
		}
		if i+1 < len(args) {
			flags = append(flags, args[i+1])
			i++
		}
	}
	return append(flags, rest...)
}

func printOverview(w io.Writer) {
	fmt.Fprint(w, `mirabilis maps the Milky Way from parallax sources: one joint Bayesian fit of the
spiral arms, the rotation curve, the Sun's motion and the sources' motions.

Usage:

	mirabilis <command> [arguments]

Commands:

`)
	tw := tabwriter.NewWriter(w, 0, 8, 2, ' ', 0)
	for _, c := range commands {
		fmt.Fprintf(tw, "\t%s\t%s\n", c.Name, c.Short)
	}
	tw.Flush()
	fmt.Fprint(w, "\nUse \"mirabilis help <command>\" for more about a command.\n\nHelp topics:\n\n")
	for _, t := range topics {
		fmt.Fprintf(tw, "\t%s\t%s\n", t.Name, t.Short)
	}
	tw.Flush()
	fmt.Fprint(w, "\nUse \"mirabilis help <topic>\" for more about that topic.\n")
}

func printCommandHelp(w io.Writer, c *command) {
	fmt.Fprintf(w, "usage: mirabilis %s %s\n\n%s\n", c.Name, c.Usage, strings.TrimSpace(c.Long))
	fs := flag.NewFlagSet(c.Name, flag.ContinueOnError)
	c.Flags(fs)
	has := false
	fs.VisitAll(func(*flag.Flag) { has = true })
	if has {
		fmt.Fprint(w, "\nFlags:\n")
		fs.SetOutput(w)
		fs.VisitAll(func(f *flag.Flag) {
			name, usage := flag.UnquoteUsage(f)
			if name != "" {
				name = " " + name
			}
			fmt.Fprintf(w, "  --%s%s\n    \t%s", f.Name, name, strings.ReplaceAll(usage, "\n", "\n    \t"))
			if f.DefValue != "" && f.DefValue != "false" && f.DefValue != "0" && f.DefValue != "0s" {
				fmt.Fprintf(w, " (default %s)", f.DefValue)
			}
			fmt.Fprintln(w)
		})
	}
}

func runHelp(args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		printOverview(stdout)
		return 0
	}
	if len(args) > 1 {
		fmt.Fprintln(stderr, "usage: mirabilis help [command or topic]")
		return 2
	}
	if c := lookup(args[0]); c != nil {
		printCommandHelp(stdout, c)
		return 0
	}
	for _, t := range topics {
		if t.Name == args[0] {
			fmt.Fprintln(stdout, strings.TrimSpace(t.Text()))
			return 0
		}
	}
	fmt.Fprintf(stderr, "mirabilis help: unknown command or topic %q%s\nRun 'mirabilis help' for the list.\n", args[0], didYouMean(args[0], commandNames(true), ""))
	return 2
}

// didYouMean returns " (did you mean PREFIXword?)" for the known word nearest to word, or ""
// when none is near.
func didYouMean(word string, known []string, prefix string) string {
	if s := spelling.Nearest(word, known); s != "" {
		return fmt.Sprintf(" (did you mean %s%s?)", prefix, s)
	}
	return ""
}

// flagError rewrites an error of the flag package in the tool's terms: flags are written
// with two dashes, and a flag that does not exist gets the nearest one suggested.
func flagError(fs *flag.FlagSet, err error) string {
	msg := err.Error()
	const undefined = "flag provided but not defined: "
	if name, ok := strings.CutPrefix(msg, undefined); ok {
		name = strings.TrimLeft(name, "-")
		var known []string
		fs.VisitAll(func(f *flag.Flag) { known = append(known, f.Name) })
		return fmt.Sprintf("unknown flag --%s%s", name, didYouMean(name, known, "--"))
	}
	// "invalid value "x" for flag -seed: …" names the flag with one dash.
	return strings.Replace(msg, "for flag -", "for flag --", 1)
}

// version is the tool's version; release builds set it with
// -ldflags "-X main.version=v1.2.3". Otherwise the module's version and the commit the
// binary was built from are shown.
var version = ""

// versionLine returns "mirabilis VERSION" with the commit and Go release the binary was built
// with, as far as the build recorded them.
func versionLine() string {
	v := version
	var commit, when, modified string
	goVersion := runtime.Version()
	if bi, ok := debug.ReadBuildInfo(); ok {
		if v == "" {
			v = bi.Main.Version
		}
		goVersion = bi.GoVersion
		for _, s := range bi.Settings {
			switch s.Key {
			case "vcs.revision":
				commit = s.Value
			case "vcs.time":
				when = s.Value
			case "vcs.modified":
				if s.Value == "true" {
					modified = " with local changes"
				}
			}
		}
	}
	if v == "" {
		v = "(devel)"
	}
	line := "mirabilis " + v
	if commit != "" {
		if len(commit) > 12 {
			commit = commit[:12]
		}
		line += ", commit " + commit
		if when != "" {
			line += " of " + when
		}
		line += modified
	}
	return line + ", built with " + goVersion
}
