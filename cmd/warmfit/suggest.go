package main

import (
	"fmt"
	"regexp"
	"sort"
	"strings"

	"github.com/spf13/pflag"
)

// Suggestions for mistyped commands and flags: the known names within
// edit distance maxSuggestDistance of what was typed.

// maxSuggestDistance is the largest edit distance of a suggestion: two
// slips (a swapped pair is two) and no more, so unrelated names stay out.
const maxSuggestDistance = 2

// commandNames lists the registered commands.
func commandNames() []string {
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	return names
}

// didYouMean returns `; did you mean "X"?` (or "X" or "Y") for the
// candidates closest to typed within maxSuggestDistance, or "".
func didYouMean(typed string, candidates []string) string {
	best, picks := maxSuggestDistance+1, []string(nil)
	for _, c := range candidates {
		switch d := editDistance(strings.ToLower(typed), strings.ToLower(c)); {
		case d < best:
			best, picks = d, []string{c}
		case d == best:
			picks = append(picks, c)
		}
	}
	if len(picks) == 0 || best == 0 {
		return ""
	}
	quoted := make([]string, len(picks))
	for i, p := range picks {
		quoted[i] = fmt.Sprintf("%q", p)
	}
	return "; did you mean " + strings.Join(quoted, " or ") + "?"
}

// flagSuggestion is didYouMean for the flag of pflag's "unknown flag:
// --NAME" error, among the flags of fs.
func flagSuggestion(err error, fs *pflag.FlagSet) string {
	name, ok := strings.CutPrefix(err.Error(), "unknown flag: --")
	if !ok {
		return ""
	}
	var flags []string
	fs.VisitAll(func(f *pflag.Flag) { flags = append(flags, "--"+f.Name) })
	return didYouMean("--"+name, flags)
}

// unknownNamePattern matches the messages of the lattice and model
// packages about a name not in their list: `unknown preset "tfimm"
// (known: a, b, ...)`, `unknown lattice kind "sqare" (known: ...)`.
var unknownNamePattern = regexp.MustCompile(`unknown (?:preset|lattice kind) "([^"]*)" \(known: ([^)]*)\)`)

// nameSuggestion is didYouMean for the name of such a message, among the
// names it lists, or "".
func nameSuggestion(msg string) string {
	m := unknownNamePattern.FindStringSubmatch(msg)
	if m == nil {
		return ""
	}
	known := strings.Split(m[2], ",")
	for i := range known {
		known[i] = strings.TrimSpace(known[i])
	}
	return didYouMean(m[1], known)
}

// editDistance is the Levenshtein distance of a and b in bytes (insert,
// delete or replace one byte at a time; Wagner and Fischer's dynamic
// programme, from memory).
func editDistance(a, b string) int {
	prev := make([]int, len(b)+1)
	cur := make([]int, len(b)+1)
	for j := range prev {
		prev[j] = j
	}
	for i := 1; i <= len(a); i++ {
		cur[0] = i
		for j := 1; j <= len(b); j++ {
			cost := 1
			if a[i-1] == b[j-1] {
				cost = 0
			}
			cur[j] = min(prev[j]+1, cur[j-1]+1, prev[j-1]+cost)
		}
		prev, cur = cur, prev
	}
	return prev[len(b)]
}
