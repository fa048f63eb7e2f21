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
		name, rest, ok := strings.Cut(strings.TrimPrefix(line, helpIndent), " ")
		if !strings.HasPrefix(line, helpIndent) || !ok || commands[name] == nil {
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
	if code, _, errs := runCmd("version", "--strict"); code != exitUsage || !strings.Contains(errs, "never prints a WARNING") {
		t.Errorf("version --strict: exit %d, want %d\n%s", code, exitUsage, errs)
	}
	_, help, _ := runCmd("help", "bulk")
	if regexp.MustCompile(`CSV: +CSV`).MatchString(help) || strings.Contains(help, "command, order, beta") {
		t.Errorf("help bulk keeps the garbled CSV sentence:\n%s", help)
	}
}

// Every command's help has warmfit's own layout, made by the shared
// printCommandHelp: the title line "warmfit NAME — SHORT", then the
// sections Synopsis, Description, Flags and Example in that order, and
// no wording recalled from another tool ("usage:" in lower case, a
// description opening with the command's own name as its subject).
// The top-level help has its own headings (common practice where there
// is no outside reference).
func TestHelpLayout(t *testing.T) {
	for name, c := range commands {
		code, out, _ := runCmd("help", name)
		if code != exitOK {
			t.Fatalf("help %s: exit %d", name, code)
		}
		if first, _, _ := strings.Cut(out, "\n"); first != "warmfit "+name+" — "+c.Short {
			t.Errorf("help %s: first line %q", name, first)
		}
		last := -1
		for _, h := range []string{"\nSynopsis:\n  warmfit " + name, "\nDescription:\n  ", "\nFlags:\n", "\nExample:\n  "} {
			i := strings.Index(out, h)
			if i < 0 && !(h == "\nFlags:\n" && name == "version") {
				t.Errorf("help %s: no section %q", name, strings.TrimSpace(h))
			}
			if i >= 0 && i < last {
				t.Errorf("help %s: section %q out of order", name, strings.TrimSpace(h))
			}
			last = max(last, i)
		}
		title := strings.ToUpper(name[:1]) + name[1:]
		if strings.Contains(out, "usage:") || regexp.MustCompile(`(?m)^  `+title+` [a-z]+s\b`).MatchString(out) {
			t.Errorf("help %s: wording of another tool's help:\n%s", name, out)
		}
	}
	_, list, _ := runCmd("help")
	for _, want := range []string{"warmfit — ", "\nSynopsis:\n", "\nCommands:\n", "\nMore help:\n", "Exit status:"} {
		if !strings.Contains(list, want) {
			t.Errorf("help: no %q:\n%s", want, list)
		}
	}
	if strings.Contains(list, "The commands:") || strings.Contains(list, "\t") {
		t.Errorf("help: the top-level list keeps another tool's layout:\n%s", list)
	}
}

// "help help" explains help itself, and a mistyped help topic is matched
// against the topics, not only the command names (review finding: "help
// help" suggested "bulk or demo or sweep").
func TestHelpTopics(t *testing.T) {
	for _, tc := range []struct {
		args []string
		code int
		want string
	}{
		{[]string{"help", "help"}, exitOK, "warmfit help formats [SECTION]"},
		{[]string{"help", "hlep"}, exitUsage, `did you mean "help"?`},
		{[]string{"help", "formts"}, exitUsage, `did you mean "formats"?`},
		{[]string{"help", "fti"}, exitUsage, `did you mean "fit"?`},
	} {
		code, out, errs := runCmd(tc.args...)
		if code != tc.code || !strings.Contains(out+errs, tc.want) {
			t.Errorf("warmfit %s: exit %d, want %d and %q:\n%s%s", strings.Join(tc.args, " "), code, tc.code, tc.want, out, errs)
		}
	}
}
