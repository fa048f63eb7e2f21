package main

import (
	"path/filepath"
	"sort"
	"strings"
	"testing"

	"github.com/spf13/pflag"

	"warmfit/lattice/model"
)

// registerFlags builds a command's flag set the way the runner does.
func registerFlags(c *command) *pflag.FlagSet {
	fs, _ := commandFlags(c)
	fs.SetOutput(new(strings.Builder))
	checkFreshFlags(fs)
	return fs
}

// flagValues records every flag's current value.
func flagValues(fs *pflag.FlagSet) map[string]string {
	v := map[string]string{}
	fs.VisitAll(func(f *pflag.Flag) { v[f.Name] = f.Value.String() })
	return v
}

// flagCandidates are values to try for a flag of a given type, in order;
// the first two that the flag accepts (and that differ from its default
// and each other) are used for the two runs.
func flagCandidates(f *pflag.Flag, tag string) []string {
	switch f.Value.Type() {
	case "bool":
		if f.DefValue == "true" {
			return []string{"false"}
		}
		return []string{"true"}
	case "int", "int64", "uint", "uint64", "L|auto":
		return []string{"3", "5", "4"}
	case "float64", "B":
		return []string{"0.37", "0.45"}
	case "duration":
		return []string{"17s", "29s"}
	}
	return []string{tag + "-one-" + f.Name, tag + "-two-" + f.Name, "a=1", "b=2", "3", "5"}
}

// TestFreshFlagStateEveryCommand runs every command twice in this
// process: the first run sets every flag it can to a non-default value
// (through the runner, stopped by --help after parsing, so nothing is
// computed or written), the second registers the flags again as the
// runner does and sets half of them to other values. The second run must
// see its own values and the defaults, nothing of the first (common
// practice: a run's state is its arguments only).
func TestFreshFlagStateEveryCommand(t *testing.T) {
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, name := range names {
		c := commands[name]
		t.Run(name, func(t *testing.T) {
			baseline := flagValues(registerFlags(c))
			// Pick values each flag accepts, each on a scratch registration
			// of its own (slice values append on a second Set).
			first, second := map[string]string{}, map[string]string{}
			firstShown, secondShown := map[string]string{}, map[string]string{}
			registerFlags(c).VisitAll(func(f *pflag.Flag) {
				if f.Name == "help" {
					return
				}
				var got []string
				var shown []string
				for _, v := range flagCandidates(f, name) {
					g := registerFlags(c).Lookup(f.Name)
					if g.Value.Set(v) != nil {
						continue
					}
					s := g.Value.String()
					if s == baseline[f.Name] || (len(shown) > 0 && s == shown[0]) {
						continue
					}
					got, shown = append(got, v), append(shown, s)
					if len(got) == 2 {
						break
					}
				}
				if len(got) > 0 {
					first[f.Name], firstShown[f.Name] = got[0], shown[0]
				}
				if len(got) > 1 {
					second[f.Name], secondShown[f.Name] = got[1], shown[1]
				}
			})
			if len(first) == 0 {
				t.Skip("no flags")
			}
			args := []string{name}
			for n, v := range first {
				args = append(args, "--"+n+"="+v)
			}
			sort.Strings(args[1:])
			code, _, stderr := runCmd(append(args, "--help")...)
			if code != exitOK {
				t.Fatalf("first run %v: exit %d: %s", args, code, stderr)
			}

			// The second run starts from the defaults ...
			fs := registerFlags(c)
			for n, v := range flagValues(fs) {
				if v != baseline[n] {
					t.Errorf("--%s = %q at the start of the second run, want the default %q (kept from the first run's %q)", n, v, baseline[n], first[n])
				}
			}
			// ... and sees exactly its own values: every other flag, set to
			// a second value, the rest left at the defaults.
			var args2 []string
			own := map[string]string{}
			i := 0
			for _, n := range sortedKeys(second) {
				if i%2 == 0 {
					args2 = append(args2, "--"+n+"="+second[n])
					own[n] = secondShown[n]
				}
				i++
			}
			if err := fs.Parse(args2); err != nil {
				t.Fatalf("second run %v: %v", args2, err)
			}
			for n, v := range flagValues(fs) {
				want := baseline[n]
				if w, ok := own[n]; ok {
					want = w
				}
				if v != want {
					t.Errorf("second run: --%s = %q, want %q (first run had %q)", n, v, want, firstShown[n])
				}
			}
		})
	}
}

func sortedKeys(m map[string]string) []string {
	k := make([]string, 0, len(m))
	for n := range m {
		k = append(k, n)
	}
	sort.Strings(k)
	return k
}

// TestFreshFlagStateObservable runs real commands twice with different
// flags and checks in their output that the second run used its own
// (and default) values only: --beta, --order, --shells, --set, --tie and
// --units of model and predict, which hold custom and slice values.
func TestFreshFlagStateObservable(t *testing.T) {
	dir := t.TempDir()
	first := filepath.Join(dir, "first.json")
	second := filepath.Join(dir, "second.json")
	if code, _, e := runCmd("model", "--lattice", "chain:5", "--preset", "tfim", "--set", "J=2,hx=0.5", "--set", "hz=0.1",
		"--shells", "2", "--beta", "0.9", "--tie", "--units", "K", "-o", first); code != 0 {
		t.Fatalf("first model: %s", e)
	}
	if code, _, e := runCmd("model", "--lattice", "chain:5", "--preset", "tfim", "-o", second); code != 0 {
		t.Fatalf("second model: %s", e)
	}
	m, err := model.ReadFile(second)
	if err != nil {
		t.Fatal(err)
	}
	// Closed form: the default open 5-chain tfim has 4 ZZ + 5 X terms
	// (hz = 0 is left out), no beta, no groups, no units, one shell.
	if len(m.Terms) != 9 || m.Beta != 0 || m.Units != "" || m.Lattice.Spec.Shells == 2 {
		t.Errorf("second model kept state: %d terms, beta %v, units %q, shells %d", len(m.Terms), m.Beta, m.Units, m.Lattice.Spec.Shells)
	}
	for _, term := range m.Terms {
		if term.Group != "" || (term.Pauli == "ZZ" && term.Coeff == 2) {
			t.Errorf("second model kept --tie or --set: %+v", term)
		}
	}

	withBeta := filepath.Join(dir, "beta.json")
	if code, _, e := runCmd("model", "--lattice", "chain:5", "--preset", "tfim", "--beta", "0.3", "-o", withBeta); code != 0 {
		t.Fatal(e)
	}
	_, _, e1 := runCmd("predict", "--model", withBeta, "--beta", "0.8", "--order", "3")
	code, _, e2 := runCmd("predict", "--model", withBeta)
	if code != 0 {
		t.Fatalf("second predict: %s", e2)
	}
	// The second run's bound line: beta 0.3 over the bound 0.0368 is 8.15x.
	if !strings.Contains(e1, "beta = 0.8") || strings.Contains(e2, "0.8") || !strings.Contains(e2, "8.15x above") {
		t.Errorf("--beta leaked: first run:\n%s\nsecond run:\n%s", e1, e2)
	}
	if !strings.Contains(e2, "chosen automatically") {
		t.Errorf("--order 3 leaked into the second run:\n%s", e2)
	}
}
