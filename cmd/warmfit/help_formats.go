package main

import (
	_ "embed"
	"fmt"
	"io"
	"strings"
)

// formatsDoc is the file-format contract, the one copy: README and
// DEVELOPERS.md point to it and "warmfit help formats" prints it.
//
//go:embed formats.md
var formatsDoc string

// formatsSection is one "## key: title" section of formatsDoc.
type formatsSection struct {
	Key, Title, Text string
}

// formatsSections splits formatsDoc at its "## " headings; the key is the
// word before the heading's colon.
func formatsSections() []formatsSection {
	var out []formatsSection
	for _, chunk := range strings.Split(formatsDoc, "\n## ")[1:] {
		heading, _, _ := strings.Cut(chunk, "\n")
		key, title, _ := strings.Cut(heading, ":")
		out = append(out, formatsSection{
			Key:   strings.TrimSpace(key),
			Title: strings.TrimSpace(title),
			Text:  "## " + strings.TrimRight(chunk, "\n") + "\n",
		})
	}
	return out
}

// printFormatsHelp writes the whole contract, or the section named by
// args[0]; an unknown section is a usage error that lists the keys.
func printFormatsHelp(w, errw io.Writer, args []string) int {
	if len(args) == 0 {
		fmt.Fprint(w, formatsDoc)
		return exitOK
	}
	if len(args) > 1 {
		fmt.Fprintf(errw, "warmfit help formats: give at most one section (got %d words)\n", len(args))
		return exitUsage
	}
	var keys []string
	for _, s := range formatsSections() {
		if strings.EqualFold(s.Key, args[0]) {
			fmt.Fprint(w, s.Text)
			return exitOK
		}
		keys = append(keys, s.Key)
	}
	fmt.Fprintf(errw, "warmfit help formats: no section %q; sections: %s\n", args[0], strings.Join(keys, ", "))
	return exitUsage
}
