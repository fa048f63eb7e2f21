package main

import (
	"bytes"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"warmfit/fit/bulk"
)

// The demo's chi(T) below the expansion's trusted range must carry the
// stated Curie tail of the free spins on top of the infinite chain's own
// susceptibility (a finite ring's spin gap would hide both). The chain
// reference at T = 2 K = 0.073 J is bracketed by the exact T = 0 value
// 1/(pi^2 J) (Griffiths 1964; from memory) and the leading logarithmic
// correction (1/(pi^2 J)) (1 + 1/(2 ln(T0/T))), T0 ~ 7.7 J (Eggert,
// Affleck and Takahashi 1994; from memory); the written value, noise
// included, must be within 5% of rho C/T + chi0 + (1 - rho) g^2 U chi_chain
// for both.
func TestBulkDemoChiHasImpurityTail(t *testing.T) {
	chain, err := bulk.NewExpansionModel("chain", 14, bulk.ExpansionOptions{})
	if err != nil {
		t.Fatal(err)
	}
	var c orvaniteCurve
	for _, cc := range orvaniteCurves() {
		if cc.q == bulk.Susceptibility {
			c = cc
		}
	}
	path := filepath.Join(t.TempDir(), c.file)
	var errb bytes.Buffer
	env := &runEnv{Stdout: &errb, Stderr: &errb, Stdin: strings.NewReader("")}
	if err := writeOrvaniteCurve(env, path, c, []bulk.ForwardModel{chain}, rand.New(rand.NewPCG(1, 2))); err != nil {
		t.Fatal(err)
	}
	raw, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	lines := strings.Split(strings.TrimSpace(string(raw)), "\n")
	fields := strings.Split(lines[1], ",")
	tK, _ := strconv.ParseFloat(fields[0], 64)
	chi, _ := strconv.ParseFloat(fields[1], 64)
	if tK != 2 {
		t.Fatalf("first row at %g K, want 2 K", tK)
	}
	j, g, rho := orvaniteTruth[bulk.ParamJ], orvaniteTruth[bulk.ParamG], orvaniteTruth[bulk.ParamImpurity]
	tail := rho * bulk.CurieConstant(g, 0.5) / tK
	u := g * g * bulk.MolarSusceptibilityUnit
	zeroT := 1 / (math.Pi * math.Pi * j)
	for _, chainChi := range []float64{zeroT, zeroT * (1 + 1/(2*math.Log(7.7*j/tK)))} {
		want := tail + orvaniteTruth[bulk.ParamChi0] + (1-rho)*u*chainChi
		t.Logf("chi(2 K) = %.5g emu/mol; reference %.5g (tail %.4g, chain %.4g)", chi, want, tail, (1-rho)*u*chainChi)
		if math.Abs(chi/want-1) > 0.05 {
			t.Errorf("chi(2 K) = %.5g emu/mol, want %.5g within 5%% (tail %.4g + chain %.4g)", chi, want, tail, (1-rho)*u*chainChi)
		}
	}
}
