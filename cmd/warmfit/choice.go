package main

import "strings"

// Named choices of string flags (--format and the like). Each flag keeps
// its plain string value (so that every run's flag state is fresh) and is
// parsed once, at the top of its command, by parseChoice.

// outputFormat is the value of a --format flag.
type outputFormat string

// Output formats; each command accepts some of them.
const (
	formatText outputFormat = "text"
	formatJSON outputFormat = "json"
	formatCSV  outputFormat = "csv"
)

// parseChoice returns value as a T when it is one of choices, and
// otherwise a usage error naming the flag and the choices, as in
// `--format "xml": want text, csv or json`.
func parseChoice[T ~string](flag, value string, choices ...T) (T, error) {
	names := make([]string, len(choices))
	for i, c := range choices {
		if string(c) == value {
			return c, nil
		}
		names[i] = string(c)
	}
	want := names[len(names)-1]
	if len(names) > 1 {
		want = strings.Join(names[:len(names)-1], ", ") + " or " + want
	}
	var zero T
	return zero, usagef("%s %q: want %s", flag, value, want)
}
