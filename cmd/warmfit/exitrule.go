package main

import (
	"fmt"
	"io"
	"os"

	"github.com/spf13/pflag"
)

// exitRule is the one statement of warmfit's exit status; README.md and
// "warmfit help" quote it (a test checks that README does).
const exitRule = `Exit status: 0 the result was written, trusted or with WARNING lines (on stderr and
in the file) where it may mislead; 1 failure: the work was attempted and gave no result
(unreadable or bad input, numerical failure, a fit that did not converge), or any WARNING
under --strict; 2 usage error: nothing was attempted or written, because the flags or
arguments are wrong or ask for more than can be done (a method past its size limit, a
run over --budget or the memory; the message names the flag to change).`

// strictUsage is the help line of --strict, which every command has.
const strictUsage = "exit 1 when any WARNING was printed (the result is still written)"

// addStrictFlag registers --strict on fs.
func addStrictFlag(fs *pflag.FlagSet, strict *bool) {
	*strict = false
	fs.BoolVar(strict, "strict", false, strictUsage)
}

// warningCounter passes stderr through and counts the lines that start
// with "WARNING" (after indentation), so that --strict follows every warning a command
// prints, whichever code prints it.
type warningCounter struct {
	w        io.Writer
	count    int
	col      int  // bytes written of the current line
	mismatch bool // the current line does not start with warningPrefix
}

const warningPrefix = "WARNING"

func (c *warningCounter) Write(p []byte) (int, error) {
	for _, b := range p {
		if b == '\n' || b == '\r' {
			c.col, c.mismatch = 0, false
			continue
		}
		if c.col == 0 && (b == ' ' || b == '\t') {
			continue // indentation (the demo indents its step lines)
		}
		if c.col < len(warningPrefix) && !c.mismatch {
			if b != warningPrefix[c.col] {
				c.mismatch = true
			} else if c.col == len(warningPrefix)-1 {
				c.count++
			}
		}
		c.col++
	}
	return c.w.Write(p)
}

// Stat reports on the underlying stream when it is a file, so that the
// progress bar still knows a terminal.
func (c *warningCounter) Stat() (os.FileInfo, error) {
	if f, ok := c.w.(*os.File); ok {
		return f.Stat()
	}
	return nil, fmt.Errorf("stderr is not a file")
}
