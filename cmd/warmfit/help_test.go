package main

import (
	"regexp"
	"strings"
	"testing"
)

// The command list gives every name a column as wide as the longest name
// plus a gap, so no short description runs into its name (review finding
// 12; common practice for aligned listings).
func TestCommandListColumnsSeparated(t *testing.T) {
	_, out, _ := runCmd("help")
	width := 0
	for n := range commands {
		width = max(width, len(n))
	}
	rows := 0
	for _, line := range strings.Split(out, "\n") {
		name, rest, ok := strings.Cut(strings.TrimPrefix(line, "\t"), " ")
		if !strings.HasPrefix(line, "\t") || !ok || commands[name] == nil {
			continue
		}
		rows++
		if gap := len(rest) - len(strings.TrimLeft(rest, " ")) + 1; len(name)+gap < width+2 {
			t.Errorf("%q: description starts at column %d, want %d", line, len(name)+gap, width+2)
		}
	}
	if rows != len(commands) {
		t.Errorf("%d command rows, want %d:\n%s", rows, len(commands), out)
	}
}

// The hints that end usage messages are in the project's own words, and
// every command but version (which never warns) takes --strict (review
// findings 12 and 13).
func TestHelpHintsAndStrict(t *testing.T) {
	_, list, _ := runCmd("help")
	_, _, unknownCmd := runCmd("fti")
	_, _, badFlag := runCmd("fit", "--bogus-flag")
	for _, s := range []string{list, unknownCmd, badFlag} {
		if strings.Contains(s, "for more about a command") || strings.Contains(s, "for usage.") {
			t.Errorf("wording recalled from another tool:\n%s", s)
		}
	}
	if !strings.Contains(badFlag, "warmfit help fit") || !strings.Contains(unknownCmd, "warmfit help") {
		t.Errorf("hints do not name the help command:\n%s\n%s", badFlag, unknownCmd)
	}
	if code, _, errs := runCmd("version", "--strict"); code != exitUsage {
		t.Errorf("version --strict: exit %d, want %d\n%s", code, exitUsage, errs)
	}
	_, help, _ := runCmd("help", "bulk")
	if regexp.MustCompile(`CSV: +CSV`).MatchString(help) || strings.Contains(help, "command, order, beta") {
		t.Errorf("help bulk keeps the garbled CSV sentence:\n%s", help)
	}
}
