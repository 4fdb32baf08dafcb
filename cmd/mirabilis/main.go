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
	"os/signal"
	"sort"
	"strings"
	"syscall"
	"text/tabwriter"
)

// A command is one subcommand of the tool, in the manner of the go command: a usage line, a
// one-line summary, a long help text and its own flag set.
type command struct {
	Name  string
	Usage string // arguments after the command name, e.g. "[--out DIR] CATALOG.csv"
	Short string // one line, no final period
	Long  string // the full help text

	// SetFlags registers the command's flags; it may be nil.
	SetFlags func(fs *flag.FlagSet)
	// Run executes the command with the arguments left after flag parsing.
	Run func(env *runEnv, args []string) error
}

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
	flags  *flag.FlagSet
}

// errUsage marks an error in the way a command was called; the usage line follows it.
var errUsage = errors.New("usage")

// exitError carries a chosen exit status for an error already reported in full.
type exitError struct{ code int }

func (e exitError) Error() string { return fmt.Sprintf("exit status %d", e.code) }

var commands []*command

var topics []*topic

func register(c *command) { commands = append(commands, c) }

func registerTopic(t *topic) { topics = append(topics, t) }

func lookup(name string) *command {
	for _, c := range commands {
		if c.Name == name {
			return c
		}
	}
	return nil
}

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	code := run(ctx, os.Args[1:], os.Stdout, os.Stderr)
	stop()
	os.Exit(code)
}

// run executes the command line args and returns the process exit status: 0 for success,
// 1 for a failure of the job (an invalid catalog, a failed fit), 2 for a usage error.
func run(ctx context.Context, args []string, stdout, stderr io.Writer) int {
	if len(args) == 0 {
		printOverview(stderr)
		return 2
	}
	name := args[0]
	switch name {
	case "help", "-h", "-help", "--help":
		return runHelp(args[1:], stdout, stderr)
	}
	c := lookup(name)
	if c == nil {
		fmt.Fprintf(stderr, "mirabilis: unknown command %q\nRun 'mirabilis help' for the list of commands.\n", name)
		return 2
	}
	fs := flag.NewFlagSet(c.Name, flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	if c.SetFlags != nil {
		c.SetFlags(fs)
	}
	if err := fs.Parse(interleave(fs, args[1:])); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			printCommandHelp(stdout, c)
			return 0
		}
		fmt.Fprintf(stderr, "mirabilis %s: %v\nusage: mirabilis %s %s\nRun 'mirabilis help %s' for details.\n",
			c.Name, err, c.Name, c.Usage, c.Name)
		return 2
	}
	env := &runEnv{ctx: ctx, stdout: stdout, stderr: stderr, flags: fs}
	err := c.Run(env, fs.Args())
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
	sorted := append([]*topic(nil), topics...)
	sort.Slice(sorted, func(i, j int) bool { return sorted[i].Name < sorted[j].Name })
	for _, t := range sorted {
		fmt.Fprintf(tw, "\t%s\t%s\n", t.Name, t.Short)
	}
	tw.Flush()
	fmt.Fprint(w, "\nUse \"mirabilis help <topic>\" for more about that topic.\n")
}

func printCommandHelp(w io.Writer, c *command) {
	fmt.Fprintf(w, "usage: mirabilis %s %s\n\n%s\n", c.Name, c.Usage, strings.TrimSpace(c.Long))
	fs := flag.NewFlagSet(c.Name, flag.ContinueOnError)
	if c.SetFlags != nil {
		c.SetFlags(fs)
	}
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
	fmt.Fprintf(stderr, "mirabilis help: unknown command or topic %q\nRun 'mirabilis help' for the list.\n", args[0])
	return 2
}
