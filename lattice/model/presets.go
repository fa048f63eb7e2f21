package model

import (
	"fmt"
	"math"
	"sort"
	"strings"

	"warmfit/lattice"
)

// PresetParam is one named coefficient of a preset.
type PresetParam struct {
	Name    string // as given in values / --set, for example "J" or "hx"
	Default float64
	Doc     string
}

// PresetInfo describes a preset: a standard model family laid out on the
// bonds and sites of a lattice.
type PresetInfo struct {
	Name string
	// Hamiltonian is the model in one line. Coefficients are literal:
	// H = sum_k coeff_k P_k with no hidden signs or factors, so J > 0 is
	// antiferromagnetic and the Pauli (not spin-1/2) operators are meant.
	Hamiltonian string
	Params      []PresetParam
	// Shells is the number of neighbour shells the lattice must have
	// (2 for models with next-nearest-neighbour couplings).
	Shells int
	// Template presets keep terms whose coefficient is zero; the others
	// leave them out of the model.
	Template bool
}

// letterParam puts the Pauli string Pauli on a bond or a site with the
// coefficient named Param.
type letterParam struct{ Pauli, Param string }

type presetDef struct {
	info PresetInfo
	nn   []letterParam // on each nearest-neighbour bond
	nnn  []letterParam // on each next-nearest-neighbour bond
	bond []letterParam // on each interaction bond (NN, and NNN with two shells)
	site []letterParam // on each site
}

var allPauliPairs = func() []letterParam {
	var out []letterParam
	for _, a := range "XYZ" {
		for _, b := range "XYZ" {
			p := string(a) + string(b)
			out = append(out, letterParam{p, p})
		}
	}
	return out
}()

// exchange is the isotropic (Heisenberg) exchange XX + YY + ZZ on a bond
// with the one coefficient named param.
func exchange(param string) []letterParam {
	return []letterParam{{"XX", param}, {"YY", param}, {"ZZ", param}}
}

// fieldZ is the uniform field along Z (site term Z with coefficient hz),
// zero by default.
var fieldZ = PresetParam{"hz", 0, "field along Z"}

var presetDefs = []presetDef{
	{
		info: PresetInfo{
			Name:        "tfim",
			Hamiltonian: "H = J sum_<ij> Z_i Z_j + hx sum_i X_i + hz sum_i Z_i (transverse-field Ising)",
			Params: []PresetParam{
				{"J", 1, "ZZ coupling on nearest-neighbour bonds"},
				{"hx", 1, "transverse field (X on every site)"},
				{"hz", 0, "longitudinal field (Z on every site)"},
			},
			Shells: 1,
		},
		nn:   []letterParam{{"ZZ", "J"}},
		site: []letterParam{{"X", "hx"}, {"Z", "hz"}},
	},
	{
		info: PresetInfo{
			Name:        "xxz",
			Hamiltonian: "H = sum_<ij> [Jxy (X_i X_j + Y_i Y_j) + Jz Z_i Z_j] + hz sum_i Z_i + hx sum_i X_i",
			Params: []PresetParam{
				{"Jxy", 1, "XX and YY coupling on nearest-neighbour bonds"},
				{"Jz", 0.5, "ZZ coupling on nearest-neighbour bonds"},
				fieldZ,
				{"hx", 0, "field along X"},
			},
			Shells: 1,
		},
		nn:   []letterParam{{"XX", "Jxy"}, {"YY", "Jxy"}, {"ZZ", "Jz"}},
		site: []letterParam{{"X", "hx"}, {"Z", "hz"}},
	},
	{
		info: PresetInfo{
			Name:        "heisenberg",
			Hamiltonian: "H = J sum_<ij> (X_i X_j + Y_i Y_j + Z_i Z_j) + hz sum_i Z_i",
			Params: []PresetParam{
				{"J", 1, "exchange on nearest-neighbour bonds"},
				fieldZ,
			},
			Shells: 1,
		},
		nn:   exchange("J"),
		site: []letterParam{{"Z", "hz"}},
	},
	{
		info: PresetInfo{
			Name:        "xy",
			Hamiltonian: "H = sum_<ij> (Jx X_i X_j + Jy Y_i Y_j) + hz sum_i Z_i",
			Params: []PresetParam{
				{"Jx", 1, "XX coupling on nearest-neighbour bonds"},
				{"Jy", 1, "YY coupling on nearest-neighbour bonds"},
				fieldZ,
			},
			Shells: 1,
		},
		nn:   []letterParam{{"XX", "Jx"}, {"YY", "Jy"}},
		site: []letterParam{{"Z", "hz"}},
	},
	{
		info: PresetInfo{
			Name: "j1j2",
			Hamiltonian: "H = J1 sum_<ij> (XX + YY + ZZ)_ij + J2 sum_<<ij>> (XX + YY + ZZ)_ij + hz sum_i Z_i " +
				"(<ij> nearest, <<ij>> next-nearest neighbours)",
			Params: []PresetParam{
				{"J1", 1, "Heisenberg exchange on nearest-neighbour bonds"},
				{"J2", 0.5, "Heisenberg exchange on next-nearest-neighbour bonds"},
				fieldZ,
			},
			Shells: 2,
		},
		nn:   exchange("J1"),
		nnn:  exchange("J2"),
		site: []letterParam{{"Z", "hz"}},
	},
	{
		info: PresetInfo{
			Name: "all2local",
			Hamiltonian: "H = sum_<ij> sum_{a,b in X,Y,Z} c_ab a_i b_j + sum_i (cX X_i + cY Y_i + cZ Z_i) " +
				"over every interaction bond <ij> (i < j): the general two-local template",
			Params: func() []PresetParam {
				var ps []PresetParam
				for _, lp := range allPauliPairs {
					ps = append(ps, PresetParam{lp.Param, 0, fmt.Sprintf("%c on the lower site, %c on the higher site of each bond", lp.Pauli[0], lp.Pauli[1])})
				}
				for _, a := range []string{"X", "Y", "Z"} {
					ps = append(ps, PresetParam{a, 0, a + " on every site"})
				}
				return ps
			}(),
			Shells:   1,
			Template: true,
		},
		bond: allPauliPairs,
		site: []letterParam{{"X", "X"}, {"Y", "Y"}, {"Z", "Z"}},
	},
}

// Presets lists the presets in a fixed order.
func Presets() []PresetInfo {
	out := make([]PresetInfo, len(presetDefs))
	for i, d := range presetDefs {
		out[i] = d.info
		out[i].Params = append([]PresetParam(nil), d.info.Params...)
	}
	return out
}

// PresetNames lists the preset names in a fixed order.
func PresetNames() []string {
	names := make([]string, len(presetDefs))
	for i, d := range presetDefs {
		names[i] = d.info.Name
	}
	return names
}

// LookupPreset returns the description of the named preset (case is
// ignored).
func LookupPreset(name string) (PresetInfo, error) {
	d, err := findPreset(name)
	if err != nil {
		return PresetInfo{}, err
	}
	info := d.info
	info.Params = append([]PresetParam(nil), d.info.Params...)
	return info, nil
}

func findPreset(name string) (*presetDef, error) {
	for i := range presetDefs {
		if strings.EqualFold(presetDefs[i].info.Name, name) {
			return &presetDefs[i], nil
		}
	}
	return nil, fmt.Errorf("unknown preset %q (known: %s)", name, strings.Join(PresetNames(), ", "))
}

// Preset lays the named model family out on l and returns its terms:
// coupling terms on the bonds (in the lattice's bond order, each bond's
// letters in the order of the preset's Hamiltonian), then field terms on
// sites 0..n-1. values overrides the documented defaults by parameter
// name; a name the preset does not have is an error that lists the valid
// names. Terms whose coefficient is zero are left out, except in template
// presets (all2local), where every term is kept so that the model can
// serve as a fitting template; all2local's coefficients all default to 0.
// Presets with next-nearest-neighbour couplings (j1j2) need a lattice
// built with two neighbour shells.
func Preset(l *lattice.Lattice, name string, values map[string]float64) ([]lattice.Term, error) {
	terms, _, err := PresetTerms(l, name, values)
	return terms, err
}

// PresetTerms is Preset that also returns, aligned with the terms, the
// name of the parameter each coefficient came from (for TieUniform).
func PresetTerms(l *lattice.Lattice, name string, values map[string]float64) ([]lattice.Term, []string, error) {
	d, err := findPreset(name)
	if err != nil {
		return nil, nil, err
	}
	info := d.info
	coeff := make(map[string]float64, len(info.Params))
	for _, p := range info.Params {
		coeff[p.Name] = p.Default
	}
	// Sorted so that the error for several bad names is deterministic.
	given := make([]string, 0, len(values))
	for k := range values {
		given = append(given, k)
	}
	sort.Strings(given)
	for _, k := range given {
		if _, ok := coeff[k]; !ok {
			return nil, nil, fmt.Errorf("preset %s has no parameter %q (valid: %s)", info.Name, k, paramNames(info))
		}
		v := values[k]
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, nil, fmt.Errorf("preset %s: parameter %s must be finite, got %v", info.Name, k, v)
		}
		coeff[k] = v
	}
	if l.Spec.Shells < info.Shells {
		return nil, nil, fmt.Errorf("preset %s couples next-nearest neighbours, but the lattice %s has only nearest-neighbour bonds: build it with two neighbour shells (add :shells=2 to the specification, or pass --shells 2)",
			info.Name, l.Spec.String())
	}

	var (
		terms  []lattice.Term
		params []string
	)
	add := func(lp letterParam, sites ...int) error {
		c := coeff[lp.Param]
		if c == 0 && !info.Template {
			return nil
		}
		t, err := lattice.NewTerm(lp.Pauli, sites, c)
		if err != nil {
			return err
		}
		terms = append(terms, t)
		params = append(params, lp.Param)
		return nil
	}
	bondSets := []struct {
		bonds []lattice.Bond
		lps   []letterParam
	}{{l.NN, d.nn}, {l.NNN, d.nnn}}
	if len(d.bond) > 0 {
		bondSets = append(bondSets, struct {
			bonds []lattice.Bond
			lps   []letterParam
		}{l.InteractionBonds(), d.bond})
	}
	for _, bs := range bondSets {
		if len(bs.lps) == 0 {
			continue
		}
		for _, b := range bs.bonds {
			for _, lp := range bs.lps {
				if err := add(lp, b.I, b.J); err != nil {
					return nil, nil, err
				}
			}
		}
	}
	for s := 0; s < l.NumSites(); s++ {
		for _, lp := range d.site {
			if err := add(lp, s); err != nil {
				return nil, nil, err
			}
		}
	}
	if len(terms) == 0 {
		return nil, nil, fmt.Errorf("preset %s: every coefficient is zero on %s, so the model has no terms", info.Name, l.Spec.String())
	}
	if err := (&Model{Lattice: l, Terms: terms}).Validate(); err != nil {
		return nil, nil, fmt.Errorf("preset %s on %s: %w", info.Name, l.Spec.String(), err)
	}
	return terms, params, nil
}

func paramNames(info PresetInfo) string {
	names := make([]string, len(info.Params))
	for i, p := range info.Params {
		names[i] = p.Name
	}
	return strings.Join(names, ", ")
}

// TieUniform sets each term's Group to the preset parameter it came from
// (params as returned by PresetTerms), so that a fit treats the model as
// uniform: one coefficient per parameter instead of one per term.
func TieUniform(terms []lattice.Term, params []string) {
	if len(params) != len(terms) {
		panic(fmt.Sprintf("lattice: TieUniform with %d terms but %d parameter names", len(terms), len(params)))
	}
	for i := range terms {
		terms[i].Group = params[i]
	}
}
