package main

import (
	"encoding/json"
	"math"
	"path/filepath"
	"strconv"
	"testing"

	"warmfit/lattice/model"
)

// With --truth, the fit CSV has per-term true and z columns, and the JSON
// report keys the z-scores by term and names the term of the largest
// error and of the largest pull separately. The pulls are checked against
// their definition z = (coeff - true)/stderr (common practice).
func TestFitTruthColumnsAndPulls(t *testing.T) {
	dir := t.TempDir()
	truth, data, truthPath := noisyChainFiles(t, dir)

	csvPath := filepath.Join(dir, "fit.csv")
	if code, _, errs := runCmd("fit", "--model", fitTemplate, "--data", data, "--order", "4", "--truth", truthPath, "--format", "csv", "-o", csvPath); code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	recs := readCSVFile(t, csvPath)
	col := map[string]int{}
	for i, h := range recs[0] {
		col[h] = i
	}
	for _, h := range []string{"coeff", "stderr", "true", "z"} {
		if _, ok := col[h]; !ok {
			t.Fatalf("fit CSV header %v lacks %q", recs[0], h)
		}
	}
	if len(recs) != 1+len(truth.Terms) {
		t.Fatalf("%d rows, want %d", len(recs)-1, len(truth.Terms))
	}
	num := func(s string) float64 {
		v, err := strconv.ParseFloat(s, 64)
		if err != nil {
			t.Fatalf("%q: %v", s, err)
		}
		return v
	}
	csvZ := map[string]float64{}
	for k, rec := range recs[1:] {
		key := truth.Terms[k].Key()
		coeff, se, tv, z := num(rec[col["coeff"]]), num(rec[col["stderr"]]), num(rec[col["true"]]), num(rec[col["z"]])
		if tv != truth.Terms[k].Coeff {
			t.Errorf("%s: true %v, want %v", key, tv, truth.Terms[k].Coeff)
		}
		if want := (coeff - tv) / se; math.Abs(z-want) > 1e-5*math.Max(1, math.Abs(want)) {
			t.Errorf("%s: z %v, (coeff - true)/stderr = %v", key, z, want)
		}
		csvZ[key] = z
	}

	jsonPath := filepath.Join(dir, "fit.json")
	if code, _, errs := runCmd("fit", "--model", fitTemplate, "--data", data, "--order", "4", "--truth", truthPath, "-o", jsonPath); code != exitOK {
		t.Fatalf("exit %d: %s", code, errs)
	}
	m, err := model.ReadFile(jsonPath)
	if err != nil {
		t.Fatal(err)
	}
	var rep struct {
		Truth struct {
			Z                map[string]*float64 `json:"z_scores"`
			LargestErrorTerm string              `json:"largest_error_term"`
			LargestPullTerm  string              `json:"largest_pull_term"`
			Worst            *string             `json:"worst_term"`
			MaxAbsZ          float64             `json:"max_abs_z"`
			Linf             float64             `json:"linf"`
		} `json:"truth"`
	}
	if err := json.Unmarshal(m.Fit, &rep); err != nil {
		t.Fatal(err)
	}
	tr := rep.Truth
	if tr.Worst != nil {
		t.Errorf("the ambiguous worst_term is still written")
	}
	if len(tr.Z) != len(truth.Terms) {
		t.Fatalf("z_scores %v: want one per term", tr.Z)
	}
	maxErr, maxZ := -1.0, -1.0
	var errTerm, pullTerm string
	for k, term := range m.Terms {
		key := term.Key()
		z := tr.Z[key]
		if z == nil || math.Abs(*z-csvZ[key]) > 1e-5*math.Max(1, math.Abs(*z)) {
			t.Errorf("z_scores[%q] = %v, the CSV has %v", key, z, csvZ[key])
			continue
		}
		if e := math.Abs(term.Coeff - truth.Terms[k].Coeff); e > maxErr {
			maxErr, errTerm = e, key
		}
		if a := math.Abs(*z); a > maxZ {
			maxZ, pullTerm = a, key
		}
	}
	if tr.LargestErrorTerm != errTerm || tr.LargestPullTerm != pullTerm || math.Abs(tr.MaxAbsZ-maxZ) > 1e-9 || math.Abs(tr.Linf-maxErr) > 1e-12 {
		t.Errorf("largest error %q (%v), largest pull %q (%v); want %q (%v) and %q (%v)",
			tr.LargestErrorTerm, tr.Linf, tr.LargestPullTerm, tr.MaxAbsZ, errTerm, maxErr, pullTerm, maxZ)
	}
}
