// Command warmfit learns the coefficients of a local Hamiltonian from
// measurements of its thermal (Gibbs) state. Run "warmfit help" for the
// list of subcommands.
package main

import (
	"errors"
	"fmt"
	"io"
	"os"
	"strings"

	"github.com/spf13/pflag"
)

// command is one subcommand. Each lives in its own file and registers
// itself from an init function.
type command struct {
	Name    string
	Short   string // one line for the command list
	Usage   string // "warmfit NAME [flags]" line
	Long    string // paragraphs shown by --help
	Example string // at least one runnable example
	// NoStrict leaves out --strict: the command prints no WARNING lines.
	NoStrict bool
	// Flags adds the command's flags to fs; Run then executes it.
	Flags func(fs *pflag.FlagSet)
	Run   func(env *runEnv, args []string) error
}

// runEnv carries the standard streams, so commands are testable.
type runEnv struct {
	Stdout io.Writer
	Stderr io.Writer
	Stdin  io.Reader
}

var commands = map[string]*command{}

func register(c *command) {
	if _, dup := commands[c.Name]; dup {
		panic("warmfit: command registered twice: " + c.Name)
	}
	commands[c.Name] = c
}

// usageError marks a mistake in how the command was called (exit 2).
type usageError struct{ msg string }

func (e *usageError) Error() string { return e.msg }

func usagef(format string, args ...any) error {
	return &usageError{msg: fmt.Sprintf(format, args...)}
}

// Exit codes; exitRule states when each is used.
const (
	exitOK      = 0
	exitFailure = 1
	exitUsage   = 2
)

func main() {
	env := &runEnv{Stdout: os.Stdout, Stderr: os.Stderr, Stdin: os.Stdin}
	os.Exit(run(env, os.Args[1:]))
}

// run executes one warmfit invocation and returns its exit code.
func run(env *runEnv, args []string) int {
	if len(args) == 0 {
		printCommandList(env.Stderr)
		return exitUsage
	}
	name := args[0]
	switch name {
	case "--version":
		name, args = "version", []string{"version"}
	case "help", "-h", "--help":
		if len(args) > 1 && args[1] == "formats" {
			return printFormatsHelp(env.Stdout, env.Stderr, args[2:])
		}
		if len(args) > 1 && args[1] == "help" {
			printHelpHelp(env.Stdout)
			return exitOK
		}
		if len(args) > 1 {
			c, ok := commands[args[1]]
			if !ok {
				topics := append(commandNames(), "formats", "help")
				fmt.Fprintf(env.Stderr, "warmfit help: no help on %q%s\n%s", args[1], didYouMean(args[1], topics), commandListHint)
				return exitUsage
			}
			printCommandHelp(env.Stdout, c, nil)
			return exitOK
		}
		printCommandList(env.Stdout)
		return exitOK
	}
	c, ok := commands[name]
	if !ok {
		fmt.Fprintf(env.Stderr, "warmfit: unknown command %q%s\n%s", name, didYouMean(name, commandNames()), commandListHint)
		return exitUsage
	}
	fs, strict := commandFlags(c)
	fs.SetOutput(io.Discard)
	checkFreshFlags(fs)
	if err := fs.Parse(args[1:]); err != nil {
		if errors.Is(err, pflag.ErrHelp) {
			printCommandHelp(env.Stdout, c, fs)
			return exitOK
		}
		hint := flagSuggestion(err, fs)
		if c.NoStrict && err.Error() == "unknown flag: --strict" {
			hint = fmt.Sprintf(": %s never prints a WARNING line, so it has no --strict", c.Name)
		}
		fmt.Fprintf(env.Stderr, "warmfit %s: %v%s\n%s", c.Name, err, hint, commandHelpHint(c.Name))
		return exitUsage
	}
	counter := &warningCounter{w: env.Stderr}
	cmdEnv := *env
	cmdEnv.Stderr = counter
	err := c.Run(&cmdEnv, fs.Args())
	if err == nil {
		if *strict && counter.count > 0 {
			fmt.Fprintf(env.Stderr, "warmfit %s: --strict: %d WARNING line(s) above; the output was written, but the run counts as failed\n", c.Name, counter.count)
			return exitFailure
		}
		return exitOK
	}
	hint := nameSuggestion(err.Error())
	var ue *usageError
	if errors.As(err, &ue) {
		fmt.Fprintf(env.Stderr, "warmfit %s: %v%s\n%s", c.Name, err, hint, commandHelpHint(c.Name))
		return exitUsage
	}
	fmt.Fprintf(env.Stderr, "warmfit %s: %v%s\n", c.Name, err, hint)
	return exitFailure
}

// helpIndent indents the body of every section of warmfit's help.
const helpIndent = "  "

// printCommandList writes warmfit's own top-level help: a title line, the
// synopsis, the commands in an aligned column, where to read more, and
// the exit status.
func printCommandList(w io.Writer) {
	fmt.Fprintf(w, "warmfit — learn local Hamiltonians from measurements of their thermal states\n\n")
	fmt.Fprintf(w, "Synopsis:\n%swarmfit COMMAND [flags] [arguments]\n\nCommands:\n", helpIndent)
	names := commandNames()
	width := 0
	for _, n := range names {
		width = max(width, len(n))
	}
	for _, n := range names {
		fmt.Fprintf(w, "%s%-*s  %s\n", helpIndent, width, n, commands[n].Short)
	}
	fmt.Fprintf(w, "\nMore help:\n")
	for _, l := range [][2]string{
		{"warmfit help COMMAND", "one command: what it does, its flags, examples"},
		{"warmfit help formats", "the file formats (warmfit help formats SECTION: one section)"},
		{"warmfit --version", "the version"},
	} {
		fmt.Fprintf(w, "%s%-22s%s\n", helpIndent, l[0], l[1])
	}
	fmt.Fprint(w, "\n"+exitRule+"\n")
}

// printHelpHelp is the help of "help" itself, in the layout of every
// command's help.
func printHelpHelp(w io.Writer) {
	fmt.Fprintf(w, `warmfit help — what warmfit, one of its commands or its file formats do

Synopsis:
%[1]swarmfit help
%[1]swarmfit help COMMAND
%[1]swarmfit help formats [SECTION]

Description:
%[1]sWithout a topic: the commands and the exit status. With a command: what it does,
%[1]sits flags and examples (the same as warmfit COMMAND --help). With formats: the
%[1]sformat contract of every file warmfit reads or writes, or one section of it.

Example:
%[1]swarmfit help fit
%[1]swarmfit help formats table
`, helpIndent)
}

// commandListHint ends the message about a command that does not exist.
const commandListHint = "The commands are listed by: warmfit help\n"

// commandHelpHint ends the message about a mistake in calling a command.
func commandHelpHint(name string) string {
	return fmt.Sprintf("Flags and examples of %s: warmfit help %s\n", name, name)
}

// printCommandHelp writes the help of one command in warmfit's layout:
// the title line "warmfit NAME — what it does", then the sections
// Synopsis, Description, Flags and Example, each body indented.
func printCommandHelp(w io.Writer, c *command, fs *pflag.FlagSet) {
	fmt.Fprintf(w, "warmfit %s — %s\n\n", c.Name, c.Short)
	fmt.Fprintf(w, "Synopsis:\n%s\n\n", indent(strings.ReplaceAll(c.Usage, "\n       ", "\n"), helpIndent))
	if c.Long != "" {
		fmt.Fprintf(w, "Description:\n%s\n\n", indent(strings.TrimSpace(c.Long), helpIndent))
	}
	if fs == nil {
		fs, _ = commandFlags(c)
	}
	if fs.HasFlags() {
		fmt.Fprintf(w, "Flags:\n%s\n", fs.FlagUsages())
	}
	fmt.Fprintf(w, "Example:\n%s\n", indent(strings.TrimSpace(c.Example), helpIndent))
}

func indent(s, prefix string) string {
	lines := strings.Split(s, "\n")
	for i, l := range lines {
		if l != "" {
			lines[i] = prefix + l
		}
	}
	return strings.Join(lines, "\n")
}

// commandFlags is c's flag set with --strict (unless c.NoStrict); strict
// points at the --strict value.
func commandFlags(c *command) (fs *pflag.FlagSet, strict *bool) {
	fs = pflag.NewFlagSet(c.Name, pflag.ContinueOnError)
	fs.SortFlags = false
	if c.Flags != nil {
		c.Flags(fs)
	}
	strict = new(bool)
	if !c.NoStrict {
		addStrictFlag(fs, strict)
	}
	return fs, strict
}
