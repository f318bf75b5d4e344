// Command wakekit turns time-resolved planar velocity fields of pulsed jets and vortex rings
// into vorticity, vortex cores, circulation and impulse budgets, pressure fields and thrust.
//
// Usage:
//
//	wakekit COMMAND [flags] FILES...
//
// Run "wakekit help" for the list of commands and "wakekit COMMAND -h" for one command.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"sort"
	"strings"

	"github.com/spf13/pflag"
)

// command is one subcommand of wakekit. Each lives in a file of its own and registers itself
// from an init function.
type command struct {
	name    string
	summary string // one line for "wakekit help"
	usage   string // "wakekit NAME [flags] FILES..."
	help    string // longer description with examples, shown by -h
	// setup declares the command's flags on fs and returns the function that runs it with the
	// remaining arguments.
	setup func(fs *pflag.FlagSet) func(env *env, args []string) error
}

// env is what a running command may use: its standard streams.
type env struct {
	stdout, stderr io.Writer
	stderrTTY      bool // stderr is a terminal (progress bars are drawn only then)
}

var commands = map[string]*command{}

func register(c *command) {
	if _, dup := commands[c.name]; dup {
		panic("wakekit: command registered twice: " + c.name)
	}
	commands[c.name] = c
}

// usageError is a mistake in how the program was called; it exits with status 2.
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

func usagef(format string, args ...any) error {
	return &usageError{msg: fmt.Sprintf(format, args...)}
}

func main() {
	os.Exit(run(os.Args[1:], &env{stdout: os.Stdout, stderr: os.Stderr, stderrTTY: isTerminal(os.Stderr)}))
}

// run executes one wakekit invocation and returns its exit status: 0 success, 1 bad data or a
// failed computation, 2 bad usage.
func run(args []string, e *env) int {
	if len(args) == 0 {
		printCommands(e.stderr)
		return 2
	}
	name := args[0]
	switch name {
	case "help", "-h", "--help":
		if len(args) > 1 {
			if c, ok := commands[args[1]]; ok {
				fs := newFlagSet(c, e)
				c.setup(fs)
				fs.SetOutput(e.stdout)
				fs.Usage()
				return 0
			}
			fmt.Fprintf(e.stderr, "wakekit: unknown command %q\n", args[1])
			return 2
		}
		printCommands(e.stdout)
		return 0
	case "version", "--version":
		fmt.Fprintln(e.stdout, "wakekit", version)
		return 0
	}
	c, ok := commands[name]
	if !ok {
		fmt.Fprintf(e.stderr, "wakekit: unknown command %q; run \"wakekit help\" for the list\n", name)
		return 2
	}
	fs := newFlagSet(c, e)
	runner := c.setup(fs)
	if err := fs.Parse(args[1:]); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			return 0
		}
		fmt.Fprintf(e.stderr, "wakekit %s: %v\nRun \"wakekit %s -h\" for help.\n", name, err, name)
		return 2
	}
	if err := runner(e, fs.Args()); err != nil {
		var ue *usageError
		if errors.As(err, &ue) {
			fmt.Fprintf(e.stderr, "wakekit %s: %v\nRun \"wakekit %s -h\" for help.\n", name, err, name)
			return 2
		}
		fmt.Fprintf(e.stderr, "wakekit %s: %v\n", name, err)
		return 1
	}
	return 0
}

// version is the program version recorded in summaries.
const version = "0.1.0"

func newFlagSet(c *command, e *env) *pflag.FlagSet {
	fs := pflag.NewFlagSet(c.name, pflag.ContinueOnError)
	fs.SortFlags = false
	fs.SetOutput(e.stderr)
	fs.Usage = func() {
		out := fs.Output()
		fmt.Fprintf(out, "Usage: %s\n\n%s\n", c.usage, strings.TrimSpace(c.summary))
		if c.help != "" {
			fmt.Fprintf(out, "\n%s\n", strings.TrimRight(c.help, "\n"))
		}
		fmt.Fprintf(out, "\nFlags:\n%s", fs.FlagUsages())
	}
	return fs
}

func printCommands(w io.Writer) {
	fmt.Fprintln(w, "wakekit: vorticity, vortex rings, circulation, pressure and thrust from planar velocity fields.")
	fmt.Fprintln(w, "\nUsage: wakekit COMMAND [flags] FILES...\n\nCommands:")
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-12s %s\n", n, commands[n].summary)
	}
	fmt.Fprintln(w, "\nRun \"wakekit COMMAND -h\" for a command's flags and examples.")
}
