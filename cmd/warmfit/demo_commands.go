package main

import (
	"fmt"
	"io"
	"strings"
)

// The warmfit command lines that do what each step of the demo did
// through the library: the report lists them, so that a user can
// reproduce the run, or any step of it on data of their own.

// demoCommand is a warmfit command line that reproduces part of a step,
// with file names relative to the output directory; a command without
// arguments is a comment only.
type demoCommand struct {
	Step    int
	Comment string
	Args    []string
}

// record notes the command that does what the step just did.
func (d *demoRun) record(step int, comment string, args ...string) {
	d.commands = append(d.commands, demoCommand{Step: step, Comment: comment, Args: args})
}

// writeCommands writes the recorded commands as a shell script, step by
// step, to be run in the output directory.
func (d *demoRun) writeCommands(b io.Writer) {
	fmt.Fprintf(b, "```sh\ncd %s\n", shellQuote(d.out))
	last := 0
	for _, c := range d.commands {
		if c.Step != last {
			fmt.Fprintf(b, "\n# step %d\n", c.Step)
			last = c.Step
		}
		if c.Comment != "" {
			fmt.Fprintf(b, "# %s\n", c.Comment)
		}
		if len(c.Args) == 0 {
			continue
		}
		quoted := make([]string, len(c.Args))
		for i, a := range c.Args {
			quoted[i] = shellQuote(a)
		}
		fmt.Fprintf(b, "warmfit %s\n", strings.Join(quoted, " "))
	}
	io.WriteString(b, "```\n\n")
}

// shellQuote quotes an argument for a POSIX shell when it needs it.
func shellQuote(s string) string {
	if s != "" && strings.IndexFunc(s, func(r rune) bool {
		return !(r >= 'a' && r <= 'z' || r >= 'A' && r <= 'Z' || r >= '0' && r <= '9' || strings.ContainsRune("-_./:=,+@%", r))
	}) < 0 {
		return s
	}
	return "'" + strings.ReplaceAll(s, "'", `'\''`) + "'"
}
