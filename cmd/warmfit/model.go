package main

import (
	"errors"
	"fmt"
	"io"
	"math"
	"sort"
	"strconv"
	"strings"

	"github.com/spf13/pflag"

	"warmfit/lattice"
	"warmfit/lattice/model"
)

// modelOptions holds the flags of "warmfit model"; Flags resets them on
// every invocation.
var modelOptions struct {
	lattice  string
	preset   string
	set      []string
	disorder float64
	seed     uint64
	beta     betaFlag
	shells   modelIntFlag
	tie      bool
	units    string
	out      string
	check    string
}

func init() {
	register(&command{
		Name:  "model",
		Short: "write a model file from a preset, or check a model file",
		Usage: "warmfit model --lattice SPEC --preset NAME [--set NAME=VALUE,...] [flags]\n" +
			"       warmfit model --check FILE [--beta B]",
		Long:    modelLong(),
		Example: modelExample,
		Flags: func(fs *pflag.FlagSet) {
			o := &modelOptions
			fs.StringVar(&o.lattice, "lattice", "", latticeFlagUsage)
			fs.StringVar(&o.preset, "preset", "", "model family: "+strings.Join(model.PresetNames(), ", "))
			fs.StringSliceVar(&o.set, "set", nil, "coefficients, NAME=VALUE[,NAME=VALUE...] (repeatable)")
			fs.Float64Var(&o.disorder, "disorder", 0, "add an independent uniform shift in [-W, W) to every coefficient")
			fs.Uint64Var(&o.seed, "seed", 1, "seed of the disorder")
			addBetaFlag(fs, &o.beta, "inverse temperature to record in the model (> 0)")
			o.beta.omitted = "leave --beta out to write a model without beta (commands then need --beta, and fit learns beta*lambda)"
			addFreshVar(fs, &o.shells, "shells", "neighbour shells of the interaction graph, 1 or 2 (overrides the lattice)")
			fs.BoolVar(&o.tie, "tie", false, "give terms of one preset parameter a common group (uniform fit)")
			fs.StringVar(&o.units, "units", "", "energy unit of the coefficients, recorded in the model")
			addOutputFlag(fs, &o.out, "the model")
			fs.StringVar(&o.check, "check", "", "validate the model `FILE` and summarise it")
		},
		Run: runModel,
	})
}

const modelExample = `# transverse-field Ising model on a 4x4 open square lattice at beta = 0.5
warmfit model --lattice square:4x4 --preset tfim --set J=1,hx=0.8 --beta 0.5 -o tfim.json

# the same with coefficients disordered by up to +-0.1, reproducibly
warmfit model --lattice square:4x4 --preset tfim --disorder 0.1 --seed 7 -o tfim-dis.json

# J1-J2 Heisenberg model (needs next-nearest neighbours)
warmfit model --lattice square:6x6:periodic --preset j1j2 --set J2=0.3 --shells 2

# a general two-local template for fitting, and a check of a model file
warmfit model --lattice chain:12 --preset all2local -o template.json
warmfit model --check tfim.json`

func modelLong() string {
	var b strings.Builder
	b.WriteString(`The model file written (JSON, see the file-format contract) holds a standard
Hamiltonian laid out on the bonds and sites of a lattice; with --check, a model
file is validated instead and summarised in one paragraph.

Coefficients are literal: H = sum_k coeff_k P_k with Pauli operators and no
hidden signs or factors of 1/2 (J > 0 is antiferromagnetic). --set changes
the defaults below; a name the preset does not have is an error. Terms whose
coefficient is zero are left out, except in all2local, a fitting template
that keeps every term (all its coefficients default to 0). --tie puts the
terms of one parameter in one group, so that a fit treats the model as
uniform. --disorder W shifts every coefficient by an independent uniform
number in [-W, W) drawn from a PCG generator seeded with --seed: the same
seed gives the same model everywhere.

Presets:
`)
	for _, p := range model.Presets() {
		fmt.Fprintf(&b, "\n  %s\n", modelIndentAfterFirst(modelWrapText(p.Name+": "+p.Hamiltonian, 74), "      "))
		if p.Shells > 1 {
			fmt.Fprintf(&b, "    needs --shells 2 (or a lattice specification ending in :shells=2)\n")
		}
		if p.Name == "all2local" {
			b.WriteString("    parameters XX, XY, ..., ZZ (first letter on the lower site) and X, Y, Z; all default 0\n")
			continue
		}
		for _, q := range p.Params {
			fmt.Fprintf(&b, "    %-4s default %-4s %s\n", q.Name, strconv.FormatFloat(q.Default, 'g', -1, 64), q.Doc)
		}
	}
	return b.String()
}

func runModel(env *runEnv, args []string) error {
	o := &modelOptions
	if len(args) > 0 {
		return usagef("unexpected argument %q (flags only)", args[0])
	}
	if o.check != "" {
		return checkModel(env)
	}
	if o.lattice == "" || o.preset == "" {
		return usagef("need --lattice and --preset (or --check FILE)")
	}
	info, err := model.LookupPreset(o.preset)
	if err != nil {
		return usagef("--preset: %v", err)
	}
	values, err := parseSetFlags(o.set, info)
	if err != nil {
		return err
	}
	if !(o.disorder >= 0) || math.IsInf(o.disorder, 0) {
		return usagef("--disorder %v: want a finite width >= 0", o.disorder)
	}
	if o.disorder > 0 && o.tie {
		return usagef("--tie and --disorder do not go together: disordered coefficients are not uniform")
	}
	if o.shells.set && o.shells.v != 1 && o.shells.v != 2 {
		return usagef("--shells %d: want 1 or 2", o.shells.v)
	}
	if err := checkOutputs([]outputFile{{"-o", o.out}}, o.lattice); err != nil {
		return err
	}
	l, err := openModelLattice(o.lattice, o.shells)
	if err != nil {
		return err
	}
	terms, params, err := model.PresetTerms(l, info.Name, values)
	if err != nil {
		return usagef("%v", err)
	}
	if o.disorder > 0 {
		model.AddDisorder(terms, o.disorder, o.seed)
	}
	if o.tie {
		model.TieUniform(terms, params)
	}
	m := &model.Model{Lattice: l, Terms: terms, Units: o.units}
	if o.beta.set {
		m.Beta = o.beta.value
	}
	return writeOutput(env, o.out, func(w io.Writer) error { return model.Write(w, m) })
}

// parseSetFlags reads NAME=VALUE pairs for the preset's parameters.
func parseSetFlags(pairs []string, info model.PresetInfo) (map[string]float64, error) {
	valid := map[string]bool{}
	names := make([]string, len(info.Params))
	for i, p := range info.Params {
		valid[p.Name] = true
		names[i] = p.Name
	}
	values := map[string]float64{}
	for _, pair := range pairs {
		name, val, ok := strings.Cut(strings.TrimSpace(pair), "=")
		name = strings.TrimSpace(name)
		if !ok || name == "" {
			return nil, usagef("--set %q: want NAME=VALUE", pair)
		}
		if !valid[name] {
			return nil, usagef("--set %s: preset %s has no parameter %q (valid: %s)", pair, info.Name, name, strings.Join(names, ", "))
		}
		if _, dup := values[name]; dup {
			return nil, usagef("--set: %s given twice", name)
		}
		v, err := strconv.ParseFloat(strings.TrimSpace(val), 64)
		if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, usagef("--set %s: %q is not a finite number", name, val)
		}
		values[name] = v
	}
	return values, nil
}

// openModelLattice opens the lattice named by spec (a specification or a
// JSON file) and applies --shells. Mistakes in a specification are usage
// errors; an unreadable or invalid file is a failure.
func openModelLattice(spec string, shells modelIntFlag) (*lattice.Lattice, error) {
	l, err := lattice.Open(spec)
	if err != nil {
		return nil, modelLatticeError(err)
	}
	if !shells.set || modelShells(l.Spec.Shells) == shells.v {
		return l, nil
	}
	if l.Spec.Kind == "graph" {
		l, err = lattice.FromGraph(l.Coords, l.NN, shells.v)
	} else {
		s := l.Spec
		s.Shells = shells.v
		l, err = lattice.Build(s)
	}
	if err != nil {
		return nil, modelLatticeError(err)
	}
	return l, nil
}

func modelLatticeError(err error) error {
	var se *lattice.SpecError
	if errors.As(err, &se) {
		return usagef("--lattice: %v", err)
	}
	return err
}

func modelShells(s int) int {
	if s == 2 {
		return 2
	}
	return 1
}

// checkModel validates the model file named by --check and prints a
// summary paragraph.
func checkModel(env *runEnv) error {
	o := &modelOptions
	if o.lattice != "" || o.preset != "" || len(o.set) > 0 || o.disorder != 0 || o.tie || o.shells.set || o.out != "" || o.units != "" {
		return usagef("--check takes only --beta; it does not combine with --lattice, --preset, --set, --disorder, --tie, --shells, --units or -o")
	}
	m, err := model.ReadFile(o.check)
	if err != nil {
		return err
	}
	if fittedWithoutScale(m) {
		if o.beta.set {
			return usagef("%s was fitted without beta: its coefficients are beta*lambda (beta = 1 by convention), so --beta would count the temperature twice; fix the energy scale with 'warmfit fit ... --scale-from TERM=VALUE'", o.check)
		}
		fmt.Fprintln(env.Stderr, unscaledModelWarning(o.check, "its beta and beta*max|coeff| below describe the products, and no energy in it is in physical units"))
	}
	if o.beta.set {
		m.Beta = o.beta.value
	}
	fmt.Fprintln(env.Stdout, modelWrapText(modelSummary(o.check, m), 78))
	return nil
}

// modelSummary describes a valid model in one paragraph.
func modelSummary(name string, m *model.Model) string {
	l := m.Lattice
	var b strings.Builder
	fmt.Fprintf(&b, "%s is a valid model on %s: %d sites, %d interaction bonds", name, l.Spec, l.NumSites(), len(l.InteractionBonds()))
	if c := len(l.Components()); c > 1 {
		fmt.Fprintf(&b, " in %d disconnected pieces", c)
	}
	fmt.Fprintf(&b, ". %d terms: %s", len(m.Terms), modelCountLetters(m.Terms))

	groups := map[string]bool{}
	grouped := 0
	for _, t := range m.Terms {
		if t.Group != "" {
			groups[t.Group] = true
			grouped++
		}
	}
	if grouped > 0 {
		fmt.Fprintf(&b, "; %d of them in %d groups, so %d free coefficients", grouped, len(groups), len(m.Terms)-grouped+len(groups))
	}
	lo, hi, maxAbs := math.Inf(1), math.Inf(-1), 0.0
	withErr := 0
	for _, t := range m.Terms {
		lo, hi = min(lo, t.Coeff), max(hi, t.Coeff)
		maxAbs = max(maxAbs, math.Abs(t.Coeff))
		if t.HasStderr {
			withErr++
		}
	}
	unit := ""
	if m.Units != "" && !fittedWithoutScale(m) {
		// A fit without beta has units "dimensionless: beta*lambda ...";
		// the sentence on beta*lambda below says it once.
		unit = " " + m.Units
	}
	fmt.Fprintf(&b, ". Coefficients from %s to %s%s (max |coeff| %s)", formatG(lo, 4), formatG(hi, 4), unit, formatG(maxAbs, 4))
	if withErr > 0 {
		fmt.Fprintf(&b, ", %d with standard errors", withErr)
	}
	if len(m.Fit) > 0 {
		b.WriteString("; the file carries a fit report")
	}
	if fittedWithoutScale(m) {
		fmt.Fprintf(&b, ". The coefficients are beta*lambda, fitted at unknown temperature: beta = %s is a convention, and beta*max|coeff| = %s", formatG(m.Beta, 4), formatG(m.Beta*maxAbs, 4))
	} else if m.Beta > 0 {
		fmt.Fprintf(&b, ". beta = %s, beta*max|coeff| = %s (the expansion converges best when this is small)", formatG(m.Beta, 4), formatG(m.Beta*maxAbs, 4))
	} else {
		b.WriteString(". No beta: give --beta to commands that need one")
	}
	b.WriteString(".")
	return b.String()
}

// modelCountLetters lists term counts by Pauli string, longer strings first.
func modelCountLetters(terms []lattice.Term) string {
	count := map[string]int{}
	for _, t := range terms {
		count[t.Pauli]++
	}
	keys := make([]string, 0, len(count))
	for k := range count {
		keys = append(keys, k)
	}
	sort.Slice(keys, func(i, j int) bool {
		if len(keys[i]) != len(keys[j]) {
			return len(keys[i]) > len(keys[j])
		}
		return keys[i] < keys[j]
	})
	parts := make([]string, len(keys))
	for i, k := range keys {
		parts[i] = fmt.Sprintf("%d %s", count[k], k)
	}
	return strings.Join(parts, ", ")
}

// modelWrapText breaks a paragraph into lines of at most width characters.
func modelWrapText(s string, width int) string {
	var b strings.Builder
	n := 0
	for i, w := range strings.Fields(s) {
		if i > 0 && n+1+len(w) > width {
			b.WriteByte('\n')
			n = 0
		} else if i > 0 {
			b.WriteByte(' ')
			n++
		}
		b.WriteString(w)
		n += len(w)
	}
	return b.String()
}

// modelIndentAfterFirst indents every line but the first.
func modelIndentAfterFirst(s, prefix string) string {
	return strings.ReplaceAll(s, "\n", "\n"+prefix)
}

// modelIntFlag is an int flag that records whether it was given.
type modelIntFlag struct {
	v   int
	set bool
}

func (f *modelIntFlag) String() string {
	if !f.set {
		return ""
	}
	return strconv.Itoa(f.v)
}

func (f *modelIntFlag) Set(s string) error {
	v, err := strconv.Atoi(s)
	if err != nil {
		return fmt.Errorf("%q is not an integer", s)
	}
	f.v, f.set = v, true
	return nil
}

func (f *modelIntFlag) Type() string { return "int" }

func (f *modelIntFlag) reset() { *f = modelIntFlag{} }
