package bulk

import "math"

// CODATAEdition names the source of every physical constant in this
// package: the 2018 CODATA recommended values (Tiesinga, Mohr, Newell and
// Taylor, Rev. Mod. Phys. 93, 025010 (2021)). Since the 2019 redefinition
// of the SI, k_B, N_A and e are exact; the Bohr magneton is measured.
const CODATAEdition = "CODATA 2018"

// SI values, CODATA 2018.
const (
	Boltzmann      = 1.380649e-23     // k_B in J/K, exact
	Avogadro       = 6.02214076e23    // N_A in 1/mol, exact
	ElementaryChg  = 1.602176634e-19  // e in C, exact
	BohrMagneton   = 9.2740100783e-24 // mu_B in J/T, standard uncertainty 2.8e-33 J/T
	BohrMagnetonSD = 2.8e-33          // standard uncertainty of BohrMagneton, J/T
)

// Derived constants. Each is a closed form of the CODATA values above, so
// the edition fixes them too.
var (
	// GasConstant R = N_A k_B in J/(mol K), exact.
	GasConstant = Avogadro * Boltzmann
	// KelvinPerMeV converts an energy in meV to kelvin: 1e-3 e / k_B, exact.
	KelvinPerMeV = 1e-3 * ElementaryChg / Boltzmann
	// KelvinPerTesla is mu_B / k_B in K/T: the Zeeman energy of g S^z = 1
	// in a field of 1 T, in kelvin.
	KelvinPerTesla = BohrMagneton / Boltzmann
	// MolarSusceptibilityUnit is N_A mu_B^2 / k_B in emu K/mol (CGS,
	// cm^3 K/mol): a mole of sites with g = 1 whose per-site response
	// d<S^z>/dh (h in kelvin) is 1/K has this molar susceptibility in emu/mol.
	// In CGS mu_B = 1e3 x (the SI value) erg/G and k_B = 1e7 x (the SI
	// value) erg/K, hence the factor 1e6/1e7.
	MolarSusceptibilityUnit = Avogadro * BohrMagneton * BohrMagneton / Boltzmann * 1e6 / 1e7
	// MuBPerFormulaUnitEmu is N_A mu_B in emu/mol (erg/(G mol)): a
	// magnetisation of one Bohr magneton per formula unit in CGS molar
	// units (about 5585).
	MuBPerFormulaUnitEmu = Avogadro * BohrMagneton * 1e3
)

// EmuPerMolInSI is the SI molar susceptibility (m^3/mol) of 1 emu/mol:
// 4 pi 1e-6 (common practice; chi_SI = 4 pi chi_CGS and 1 cm^3 = 1e-6 m^3).
const EmuPerMolInSI = 4 * math.Pi * 1e-6

// CurieConstant returns the molar Curie constant N_A g^2 mu_B^2 S(S+1)/(3 k_B)
// in emu K/mol of free spins S with g-factor g (0.3751 for g = 2, S = 1/2).
func CurieConstant(g, spin float64) float64 {
	return MolarSusceptibilityUnit * g * g * spin * (spin + 1) / 3
}
