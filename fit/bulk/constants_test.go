package bulk

import (
	"math"
	"testing"
)

// The molar Curie constant of free spin-1/2 with g = 2 is 0.3751 emu K/mol
// (common practice; N_A mu_B^2/(3 k_B) = 0.12505 emu K/mol, CODATA 2018).
func TestCurieConstant(t *testing.T) {
	if c := CurieConstant(2, 0.5); math.Abs(c-0.37515) > 5e-5 {
		t.Errorf("Curie constant %.6f emu K/mol, want 0.3751", c)
	}
	if c := CurieConstant(1, 1) / 2; math.Abs(c-0.12505) > 5e-6 {
		t.Errorf("N_A mu_B^2/(3 k_B) = %.6f, want 0.12505 emu K/mol", c)
	}
	// N_A mu_B = 5585 emu/mol per mu_B per formula unit (common practice).
	if math.Abs(MuBPerFormulaUnitEmu-5585) > 0.1 {
		t.Errorf("N_A mu_B = %.2f emu/mol", MuBPerFormulaUnitEmu)
	}
	// R = 8.314462618 J/(mol K), exact since 2019 (CODATA 2018).
	if math.Abs(GasConstant-8.314462618) > 1e-9 {
		t.Errorf("R = %.10f", GasConstant)
	}
	// mu_B/k_B = 0.67171381563 K/T (CODATA 2018).
	if math.Abs(KelvinPerTesla-0.67171381563) > 1e-10 {
		t.Errorf("mu_B/k_B = %.12f K/T", KelvinPerTesla)
	}
}
