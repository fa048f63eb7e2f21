package bulk

import (
	"fmt"
	"sort"
	"strings"
)

// Quantity is a measured bulk curve.
type Quantity int

const (
	// Susceptibility is the zero-field molar magnetic susceptibility chi(T),
	// per mole of formula units; internal unit emu/mol (= cm^3/mol, CGS).
	Susceptibility Quantity = iota
	// HeatCapacity is the molar specific heat C(T) at zero field, per mole
	// of formula units; internal unit J/(mol K).
	HeatCapacity
	// Magnetization is M(H) at fixed T, in Bohr magnetons per formula unit.
	Magnetization
	numQuantities
)

// String returns the column name of the quantity in input files.
func (q Quantity) String() string {
	switch q {
	case Susceptibility:
		return "chi"
	case HeatCapacity:
		return "C"
	case Magnetization:
		return "M"
	}
	return fmt.Sprintf("Quantity(%d)", int(q))
}

// Unit returns the internal unit of q: the unit of values in a Series and
// of model predictions.
func (q Quantity) Unit() string {
	switch q {
	case Susceptibility:
		return "emu/mol"
	case HeatCapacity:
		return "J/(mol K)"
	case Magnetization:
		return "mu_B/f.u."
	}
	return "?"
}

// unitFactors maps each column name to the accepted unit spellings
// (normalised by normUnit) and the factor that converts a value in that
// unit to the internal unit. emu/mol and emu/(mol Oe) are the same CGS
// molar susceptibility (the field in oersted is implied); cm^3/mol is its
// volume form; 1 emu/mol = 4 pi 1e-6 m^3/mol (common practice).
var unitFactors = map[string]map[string]float64{
	"T":   {"k": 1},
	"H":   {"t": 1},
	"chi": {"emu/mol": 1, "emu/(moloe)": 1, "emu/mol/oe": 1, "cm^3/mol": 1, "cm3/mol": 1, "m^3/mol": 1 / EmuPerMolInSI, "m3/mol": 1 / EmuPerMolInSI},
	"C":   {"j/(molk)": 1, "j/mol/k": 1, "j/(kmol)": 1, "mj/(molk)": 1e-3, "mj/mol/k": 1e-3},
	"M":   {"mu_b/f.u.": 1, "mu_b": 1, "μb/f.u.": 1, "μ_b/f.u.": 1, "mu_b/fu": 1},
}

// unitSpellings lists the spellings accepted for a column, for messages.
var unitSpellings = map[string]string{
	"T":   "K",
	"H":   "T (tesla, mu0 H)",
	"chi": "emu/mol, emu/(mol Oe), cm^3/mol, m^3/mol",
	"C":   "J/(mol K), J/mol/K, mJ/(mol K)",
	"M":   "mu_B/f.u., mu_B",
}

// normUnit lower-cases a unit and removes blanks and '*' or '.' used as
// multiplication signs between letters, so "J/(mol K)" and "J/(mol.K)"
// compare equal; "f.u." keeps its dots.
func normUnit(u string) string {
	u = strings.ToLower(strings.TrimSpace(u))
	u = strings.ReplaceAll(u, "f.u.", "\x00")
	u = strings.NewReplacer(" ", "", "*", "", "·", "", ".", "").Replace(u)
	return strings.ReplaceAll(u, "\x00", "f.u.")
}

// unitFactor returns the factor converting a value of column name in unit
// to the internal unit, or an error listing the accepted units.
func unitFactor(name, unit string) (float64, error) {
	table, ok := unitFactors[name]
	if !ok {
		return 0, fmt.Errorf("unknown column %q", name)
	}
	if f, ok := table[normUnit(unit)]; ok {
		return f, nil
	}
	return 0, fmt.Errorf("unknown unit %q for %s (accepted: %s)", unit, name, unitSpellings[name])
}

// quantityByName maps input column names to quantities.
var quantityByName = map[string]Quantity{"chi": Susceptibility, "C": HeatCapacity, "M": Magnetization}

func knownColumns() string {
	names := []string{"T", "H"}
	q := make([]string, 0, len(quantityByName))
	for n := range quantityByName {
		q = append(q, n)
	}
	sort.Strings(q)
	names = append(names, q...)
	for _, n := range q {
		names = append(names, n+"_err")
	}
	return strings.Join(names, ", ")
}
