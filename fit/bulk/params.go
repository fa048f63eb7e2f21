package bulk

import (
	"fmt"
	"math"
	"strconv"
	"strings"
)

// Parameter names of the materials model. Couplings are in kelvin inside
// the package (input also in meV); see ParseParamValue.
const (
	ParamJ        = "J"     // nearest-neighbour exchange, K (> 0 antiferromagnetic)
	ParamDelta    = "Delta" // XXZ anisotropy: Jz = Delta J, Jxy = J
	ParamJ2       = "J2"    // next-nearest-neighbour exchange, K
	ParamG        = "g"     // g-factor along the field
	ParamChi0     = "chi0"  // temperature-independent susceptibility, emu/mol
	ParamImpurity = "rho"   // fraction of sites that are free spin-1/2 impurities
	ParamPhononA  = "a"     // lattice heat capacity a T^3, J/(mol K^4)
	ParamPhononB  = "b"     // lattice heat capacity b T^5, J/(mol K^6)
)

// ParamInfo describes one parameter of the materials model.
type ParamInfo struct {
	Name, Unit, Doc string
	Lower, Upper    float64 // the fit keeps the parameter within these bounds
}

// paramCatalogue lists every parameter in the order results report them.
var paramCatalogue = []ParamInfo{
	{ParamJ, "K", "nearest-neighbour exchange J S_i.S_j (J > 0 antiferromagnetic)", math.Inf(-1), math.Inf(1)},
	{ParamDelta, "", "XXZ anisotropy: J (S^x S^x + S^y S^y + Delta S^z S^z), field along z", math.Inf(-1), math.Inf(1)},
	{ParamJ2, "K", "next-nearest-neighbour exchange J2 S_i.S_j", math.Inf(-1), math.Inf(1)},
	{ParamG, "", "g-factor (magnetic sites and impurities)", 0, math.Inf(1)},
	{ParamChi0, "emu/mol", "temperature-independent susceptibility (core diamagnetism, Van Vleck)", math.Inf(-1), math.Inf(1)},
	{ParamImpurity, "", "fraction of sites that are free spin-1/2 impurities (Curie tail)", 0, 1},
	{ParamPhononA, "J/(mol K^4)", "lattice heat capacity a T^3", math.Inf(-1), math.Inf(1)},
	{ParamPhononB, "J/(mol K^6)", "lattice heat capacity b T^5", math.Inf(-1), math.Inf(1)},
}

// LookupParam returns the description of a parameter.
func LookupParam(name string) (ParamInfo, bool) {
	for _, p := range paramCatalogue {
		if p.Name == name {
			return p, true
		}
	}
	return ParamInfo{}, false
}

// ParamNames lists the known parameter names.
func ParamNames() []string {
	out := make([]string, len(paramCatalogue))
	for i, p := range paramCatalogue {
		out[i] = p.Name
	}
	return out
}

// ParseParamValue reads a parameter value with an optional unit suffix
// and returns it in the internal unit: couplings accept K and meV
// ("7.5meV", "87 K"); chi0 accepts emu/mol and m^3/mol; the others take
// their own unit or none.
func ParseParamValue(name, text string) (float64, error) {
	info, ok := LookupParam(name)
	if !ok {
		return 0, fmt.Errorf("unknown parameter %q (known: %s)", name, strings.Join(ParamNames(), ", "))
	}
	s := strings.TrimSpace(text)
	// The number is the longest prefix that parses ("2e-4m^3/mol").
	i := len(s)
	for i > 0 {
		if _, err := strconv.ParseFloat(s[:i], 64); err == nil {
			break
		}
		i--
	}
	num, unit := s[:i], strings.TrimSpace(s[i:])
	v, err := strconv.ParseFloat(num, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%s=%s: not a finite number with an optional unit", name, text)
	}
	factor := 1.0
	switch {
	case unit == "":
	case info.Unit == "K" && unit == "K":
	case info.Unit == "K" && unit == "meV":
		factor = KelvinPerMeV
	case name == ParamChi0:
		f, err := unitFactor("chi", unit)
		if err != nil {
			return 0, fmt.Errorf("%s=%s: %v", name, text, err)
		}
		factor = f
	case normUnit(unit) == normUnit(info.Unit):
	default:
		want := info.Unit
		if want == "K" {
			want = "K or meV"
		}
		if want == "" {
			want = "no unit"
		}
		return 0, fmt.Errorf("%s=%s: unknown unit %q (want %s)", name, text, unit, want)
	}
	return v * factor, nil
}
