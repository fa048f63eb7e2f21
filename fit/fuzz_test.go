package fit_test

import (
	"bytes"
	"os"
	"strconv"
	"strings"
	"testing"

	"warmfit/fit"
	"warmfit/lattice"
)

// Whatever bytes arrive, ReadTable must return a table or an error, never
// panic; and a table it accepts must survive WriteTable and read back to
// the same rows (round trip: common practice for parsers).
func FuzzReadTable(f *testing.F) {
	for _, path := range []string{"../testdata/data/chain3_table.csv", "../testdata/fit/out_of_range.csv", "../testdata/fit/extra_term.csv"} {
		if b, err := os.ReadFile(path); err == nil {
			f.Add(b)
		}
	}
	f.Add([]byte("pauli,sites,value,stderr\nZZ,1 0,0.5,0.1\nX,2,-1,\n"))
	f.Add([]byte("# c\npauli,sites,value,stderr,extra\nXZ,3 1,NaN,1,a\n"))
	f.Fuzz(func(t *testing.T, data []byte) {
		tab, err := fit.ReadTable(bytes.NewReader(data), "fuzz.csv")
		if err != nil {
			if !strings.Contains(err.Error(), "fuzz.csv") {
				t.Errorf("error does not name the file: %v", err)
			}
			return
		}
		var out bytes.Buffer
		if err := fit.WriteTable(&out, tab); err != nil {
			t.Fatalf("accepted table does not write: %v", err)
		}
		back, err := fit.ReadTable(&out, "again.csv")
		if err != nil {
			t.Fatalf("written table does not read back: %v\n%s", err, out.String())
		}
		if len(back.Rows) != len(tab.Rows) {
			t.Fatalf("%d rows became %d", len(tab.Rows), len(back.Rows))
		}
		for i := range tab.Rows {
			a, b := tab.Rows[i], back.Rows[i]
			if a.Key() != b.Key() || a.Value != b.Value || a.HasStderr != b.HasStderr || (a.HasStderr && a.Stderr != b.Stderr) {
				t.Fatalf("row %d changed: %+v -> %+v", i, a, b)
			}
		}
	})
}

// Snapshot lines of any shape: an error naming the file, or counts that
// are positive with well-formed basis and outcome strings.
func FuzzScanSnapshots(f *testing.F) {
	if b, err := os.ReadFile("../testdata/data/hand_snapshots.csv"); err == nil {
		f.Add(b, 3)
	}
	f.Add([]byte("basis,outcome,count\nXZ,01,3\n"), 2)
	f.Fuzz(func(t *testing.T, data []byte, n int) {
		if n < 1 || n > 64 {
			return
		}
		err := fit.ScanSnapshots(bytes.NewReader(data), "fuzz.csv", n, func(basis, outcome string, count int64) error {
			if len(basis) != n || len(outcome) != n || count <= 0 {
				t.Fatalf("accepted bad shot %q %q %d", basis, outcome, count)
			}
			for i := 0; i < n; i++ {
				if !strings.ContainsRune("XYZ", rune(basis[i])) || (outcome[i] != '0' && outcome[i] != '1') {
					t.Fatalf("accepted bad shot %q %q", basis, outcome)
				}
			}
			return nil
		})
		if err != nil && !strings.Contains(err.Error(), "fuzz.csv") {
			t.Errorf("error does not name the file: %v", err)
		}
	})
}

// A --bases scheme of any spelling on any small system: an error, or
// bases of one letter X, Y or Z per qubit, within MaxBasisLetters in all,
// and (covering schemes) serving every term; the same seed gives the
// same bases (reproducibility: common practice).
func FuzzSchemeBases(f *testing.F) {
	for _, s := range []string{"covering", "covering:3", "random:5", "random:0", "random:-1", "random:1000000000", "random:", "covering:2", "x"} {
		f.Add(s, uint8(4), uint64(1))
	}
	f.Fuzz(func(t *testing.T, scheme string, size uint8, seed uint64) {
		n := int(size%12) + 2
		if k, err := strconv.Atoi(strings.TrimPrefix(scheme, "random:")); err == nil && k > 100000 {
			// Up to MaxBasisLetters is allowed and takes seconds and
			// hundreds of MB a call: too slow to fuzz. The refusal above
			// the ceiling is tested in cmd/warmfit (TestLimits...).
			return
		}
		var terms []lattice.Term
		for i := 0; i+1 < n; i++ {
			terms = append(terms, lattice.Term{Pauli: "ZZ", Sites: []int{i, i + 1}, Coeff: 1}, lattice.Term{Pauli: "XX", Sites: []int{i, i + 1}, Coeff: 1})
		}
		bases, desc, err := fit.SchemeBases(scheme, n, terms, seed)
		if err != nil {
			if !strings.Contains(err.Error(), "bases") {
				t.Errorf("error does not name the flag's subject: %v", err)
			}
			return
		}
		if desc == "" {
			t.Error("no description")
		}
		if int64(len(bases))*int64(n) > fit.MaxBasisLetters {
			t.Fatalf("%d bases of %d letters, above MaxBasisLetters", len(bases), n)
		}
		for _, b := range bases {
			if len(b) != n || strings.Trim(b, "XYZ") != "" {
				t.Fatalf("basis %q for %d qubits", b, n)
			}
		}
		if strings.HasPrefix(scheme, "covering") {
			for _, term := range terms {
				served := false
				for _, b := range bases {
					served = served || fit.Serves(b, term)
				}
				if !served {
					t.Fatalf("%s misses %s", scheme, term.Key())
				}
			}
		}
		again, _, _ := fit.SchemeBases(scheme, n, terms, seed)
		if strings.Join(again, ",") != strings.Join(bases, ",") {
			t.Fatal("the same seed gave other bases")
		}
	})
}
