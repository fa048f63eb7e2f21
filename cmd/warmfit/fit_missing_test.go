package main

import (
	"math"
	"math/rand/v2"
	"path/filepath"
	"strings"
	"testing"

	"warmfit/lattice/model"
)

// groupedTruth is the uniform transverse-field Ising chain of the test
// template with every ZZ bond in group "J" (0.9) and every X field in
// group "h" (0.6); ungrouped, when not empty, names one X term left out
// of its group.
func groupedTruth(t *testing.T, ungrouped string) *model.Model {
	t.Helper()
	m, err := model.ReadFile(fitTemplate)
	if err != nil {
		t.Fatal(err)
	}
	for k, term := range m.Terms {
		m.Terms[k].Group, m.Terms[k].Coeff = "J", 0.9
		if term.Pauli == "X" {
			m.Terms[k].Group, m.Terms[k].Coeff = "h", 0.6
		}
		if term.Key() == ungrouped {
			m.Terms[k].Group = ""
		}
	}
	return m
}

// writeExactTableWithout writes the exact expectations of the model
// (dense exact diagonalisation of the whole chain) except the terms
// whose keys are in skip.
func writeExactTableWithout(t *testing.T, m *model.Model, skip []string, path string) {
	t.Helper()
	writeExactTableSkipping(t, m, 0, skip, path)
}

// A table without some grouped terms fits through their groups: exact
// data at order 4 = the whole chain (exact expansion) must return the
// true J and h (reference: the truth used for exact diagonalisation), and
// the summary and report say how the missing terms were fitted. A missing
// term outside any measured group is refused by name.
func TestFitCommandMissingGroupedTerms(t *testing.T) {
	for _, tc := range []struct {
		name      string
		ungrouped string
		skip      []string
		code      int
		want      []string
	}{
		{"grouped", "", []string{"ZZ 1 2", "X 0", "X 3"}, exitOK,
			[]string{"3 terms had no data and were fitted through their group", "moment matching on measured members"}},
		{"ungrouped", "X 0", []string{"ZZ 1 2", "X 0"}, exitFailure,
			[]string{"1 of 7 terms (1 X) have no usable data", "X 0 (not in the table)"}},
		{"whole group", "", []string{"ZZ 0 1", "ZZ 1 2", "ZZ 2 3"}, exitFailure,
			[]string{"have no usable data", "ZZ 0 1 (not in the table)"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			truth := groupedTruth(t, tc.ungrouped)
			data := filepath.Join(dir, "e.csv")
			writeExactTableWithout(t, truth, tc.skip, data)
			tmplPath := filepath.Join(dir, "template.json")
			writeModelFile(t, truth, tmplPath)
			out := filepath.Join(dir, "fitted.json")
			code, _, errs := runCmd("fit", "--model", tmplPath, "--data", data, "--order", "4", "-o", out)
			if code != tc.code {
				t.Fatalf("exit %d, want %d: %s", code, tc.code, errs)
			}
			for _, w := range tc.want {
				if !strings.Contains(errs, w) {
					t.Errorf("stderr lacks %q:\n%s", w, errs)
				}
			}
			if code != exitOK {
				return
			}
			m, err := model.ReadFile(out)
			if err != nil {
				t.Fatal(err)
			}
			for k, term := range m.Terms {
				if d := math.Abs(term.Coeff - truth.Terms[k].Coeff); d > 1e-8 {
					t.Errorf("%s: coeff %v, truth %v", term.Key(), term.Coeff, truth.Terms[k].Coeff)
				}
			}
			if !strings.Contains(string(m.Fit), `"unmeasured_terms": 3`) && !strings.Contains(string(m.Fit), `"unmeasured_terms":3`) {
				t.Errorf("report does not count the unmeasured terms: %s", m.Fit)
			}
		})
	}
}

// Snapshots in bases ZZZZ and XXZZ leave X 2 and X 3 without data: they
// are fitted through group "h" (CovarianceOptions.AllowMissing), and the
// coefficients agree with the truth within four error bars (common
// practice).
func TestFitCommandSnapshotsMissingGroupedTerms(t *testing.T) {
	dir := t.TempDir()
	truth := groupedTruth(t, "")
	data := filepath.Join(dir, "shots.csv")
	writeExactShots(t, data, truth, []string{"ZZZZ", "XXZZ"}, 40000, rand.NewPCG(5, 6))
	tmplPath := filepath.Join(dir, "template.json")
	writeModelFile(t, truth, tmplPath)
	out := filepath.Join(dir, "fitted.json")
	code, _, errs := runCmd("fit", "--model", tmplPath, "--data", data, "--order", "4", "-o", out)
	if code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	if !strings.Contains(errs, "2 terms had no data and were fitted through their group") {
		t.Errorf("summary does not report the unmeasured terms:\n%s", errs)
	}
	m, err := model.ReadFile(out)
	if err != nil {
		t.Fatal(err)
	}
	for k, term := range m.Terms {
		if d := math.Abs(term.Coeff - truth.Terms[k].Coeff); !term.HasStderr || d > 4*term.Stderr {
			t.Errorf("%s: coeff %v ± %v, truth %v", term.Key(), term.Coeff, term.Stderr, truth.Terms[k].Coeff)
		}
	}
}
