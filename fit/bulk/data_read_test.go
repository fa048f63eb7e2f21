package bulk

import (
	"math"
	"strings"
	"testing"
)

func TestParseCSVConvertsUnits(t *testing.T) {
	in := `# a comment line
T [K], chi [m^3/mol], chi_err [m^3/mol], C [mJ/(mol K)], C_err [mJ/(mol K)]
300, 1.2566370614359173e-8, 1.2566370614359173e-10, 5000, 50
200, 2.5132741228718346e-8, 2.5132741228718346e-10, ,
`
	ss, err := ParseCSV(strings.NewReader(in), "x.csv", ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if len(ss) != 2 {
		t.Fatalf("%d series, want chi and C", len(ss))
	}
	chi, c := ss[0], ss[1]
	// 1 emu/mol = 4 pi 1e-6 m^3/mol (common practice): 4 pi 1e-9 m^3/mol is 1e-3 emu/mol.
	if p := chi.Points[1]; p.T != 300 || math.Abs(p.Value-1e-3) > 1e-15 || math.Abs(p.Stderr-1e-5) > 1e-17 {
		t.Errorf("chi at 300 K: %+v, want 1e-3 +- 1e-5 emu/mol", p)
	}
	if chi.Points[0].T != 200 {
		t.Errorf("points not sorted by T: %+v", chi.Points)
	}
	if len(c.Points) != 1 || c.Points[0].Value != 5 || c.Points[0].Stderr != 0.05 {
		t.Errorf("C: %+v, want one point 5 +- 0.05 J/(mol K)", c.Points)
	}
}

func TestParseCSVUnknownErrors(t *testing.T) {
	in := "T [K], chi [emu/mol], chi_err [unknown]\n10, 0.01,\n20, 0.005, unknown\n"
	ss, err := ParseCSV(strings.NewReader(in), "u.csv", ReadOptions{})
	if err != nil {
		t.Fatal(err)
	}
	if !ss[0].StderrUnknown || !math.IsNaN(ss[0].Points[0].Stderr) {
		t.Errorf("errors should be unknown: %+v", ss[0])
	}
	ss, err = ParseCSV(strings.NewReader("T [K], C [J/(mol K)]\n10, 1\n"), "v.csv", ReadOptions{UnknownStderr: map[Quantity]bool{HeatCapacity: true}})
	if err != nil || !ss[0].StderrUnknown {
		t.Errorf("option should declare the errors unknown: %v %+v", err, ss)
	}
}

func TestParseCSVRefusesBadInput(t *testing.T) {
	for _, tc := range []struct{ name, in, want string }{
		{"no stderr", "T [K], chi [emu/mol]\n10, 1\n", `b.csv:1: column "chi [emu/mol]" has no standard-error column`},
		{"negative stderr", "T [K], chi [emu/mol], chi_err [emu/mol]\n10, 1, 0.1\n20, 1, -0.1\n", `b.csv:3: column "chi_err [emu/mol]": negative standard error -0.1`},
		{"zero stderr", "T [K], chi [emu/mol], chi_err [emu/mol]\n10, 1, 0\n", "b.csv:2: column \"chi_err [emu/mol]\": zero standard error"},
		{"duplicate T", "T [K], C [J/(mol K)], C_err [J/(mol K)]\n10, 1, 0.1\n10, 1, 0.1\n", "b.csv:3: column \"C [J/(mol K)]\": temperature 10 K repeats line 2"},
		{"non-monotone T", "T [K], C [J/(mol K)], C_err [J/(mol K)]\n10, 1, 0.1\n20, 1, 0.1\n15, 1, 0.1\n", "b.csv:4: column \"C [J/(mol K)]\": temperature 15 K breaks the increasing order of lines 2-3"},
		{"unknown unit", "T [K], chi [emu/g], chi_err [emu/g]\n", `b.csv:1: column "chi [emu/g]": unknown unit "emu/g" for chi (accepted: emu/mol`},
		{"kelvin only", "T [C], chi [emu/mol], chi_err [emu/mol]\n", `unknown unit "C" for T`},
		{"unknown column", "T [K], chi [emu/mol], chi_err [emu/mol], X [K]\n", `unknown name "X"`},
		{"no T", "chi [emu/mol], chi_err [emu/mol]\n", `no temperature column`},
		{"no unit", "T, chi [emu/mol]\n", `want NAME [UNIT]`},
		{"negative T", "T [K], chi [emu/mol], chi_err [emu/mol]\n-1, 1, 0.1\n", "b.csv:2: column \"T [K]\": temperature -1 K is not positive"},
		{"not a number", "T [K], chi [emu/mol], chi_err [emu/mol]\n10, x, 0.1\n", `b.csv:2: column "chi [emu/mol]": "x" is not a finite number`},
		{"NaN", "T [K], chi [emu/mol], chi_err [emu/mol]\n10, NaN, 0.1\n", `"NaN" is not a finite number`},
		{"short row", "T [K], chi [emu/mol], chi_err [emu/mol]\n10, 1\n", "b.csv:2: 2 fields, the header has 3"},
		{"M without H", "T [K], M [mu_B/f.u.], M_err [mu_B/f.u.]\n2, 0.1, 0.01\n", `M needs a field column`},
		{"chi in field", "T [K], H [T], chi [emu/mol], chi_err [emu/mol]\n2, 1, 0.1, 0.01\n", `read as a zero-field curve`},
		{"repeated field", "T [K], H [T], M [mu_B], M_err [mu_B]\n2, 1, 0.1, 0.01\n2, 1, 0.2, 0.01\n", "b.csv:3: column \"M [mu_B]\": field 1 T at 2 K repeats line 2"},
		{"split sweep", "T [K], H [T], M [mu_B], M_err [mu_B]\n2, 1, 0.1, 0.01\n4, 1, 0.2, 0.01\n2, 2, 0.2, 0.01\n", "b.csv:4: column \"M [mu_B]\": temperature 2 K starts a second block"},
		{"empty", "# nothing\n", "b.csv: no header line"},
	} {
		_, err := ParseCSV(strings.NewReader(tc.in), "b.csv", ReadOptions{})
		if err == nil || !strings.Contains(err.Error(), tc.want) {
			t.Errorf("%s: error %v, want it to contain %q", tc.name, err, tc.want)
		}
	}
}

func TestParseParamValue(t *testing.T) {
	for _, tc := range []struct {
		name, text string
		want       float64
	}{
		{"J", "87", 87},
		{"J", "87 K", 87},
		// 1 meV / k_B = 11.604518 K, exact in the 2019 SI (CODATA 2018).
		{"J", "1meV", 11.604518121550082},
		{"chi0", "4e-10 m^3/mol", 4e-10 / (4 * math.Pi * 1e-6)},
		{"chi0", "-1e-4", -1e-4},
		{"g", "2.05", 2.05},
	} {
		got, err := ParseParamValue(tc.name, tc.text)
		if err != nil || math.Abs(got-tc.want) > 1e-12*math.Abs(tc.want) {
			t.Errorf("%s=%s: %v, %v; want %v", tc.name, tc.text, got, err, tc.want)
		}
	}
	for _, bad := range [][2]string{{"J", "5 eV"}, {"g", "2 K"}, {"Q", "1"}, {"J", "abc"}, {"J", "NaN"}} {
		if _, err := ParseParamValue(bad[0], bad[1]); err == nil {
			t.Errorf("%s=%s accepted", bad[0], bad[1])
		}
	}
}
