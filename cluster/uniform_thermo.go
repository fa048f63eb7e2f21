package cluster

import "math"

// Per-class totals on the grid. A cluster of n sites contributes, at every
// field h and inverse temperature beta, five extensive quantities:
// ln(Z/2^n), E = <H>, C = beta^2 Var(H), M = <S^z> and chi = dM/dh, and
// with derivatives their d/d value_p. They are stored flat in a slot,
// quantity q of derivative index r (0 the value, 1+p coupling p) at field f
// and temperature i in slot[((r*classQuantities+q)*nF+f)*nT+i].

// The per-class quantities, in slot order.
const (
	classLogZ = iota
	classEnergy
	classHeat
	classMagnetization
	classSusceptibility
	classQuantities
)

// gridShape describes the slot layout.
type gridShape struct{ nF, nT, derivs int }

func (g gridShape) slotLen() int { return (1 + g.derivs) * classQuantities * g.nF * g.nT }

func (g gridShape) at(r, q, f, i int) int { return ((r*classQuantities+q)*g.nF+f)*g.nT + i }

// u1Thermo fills slot from the levels of a cluster of n sites of a model
// conserving S^z: the field only shifts a level by -h m, so one spectrum
// serves every field. The formulas are the derivatives of the trace
// functions of the levels with the Hellmann–Feynman elements
// D = <n|H_p|n> as dE_n/dvalue_p (exact for trace functions even with
// degeneracies; derived):
//
//	d lnZ = -beta <D>
//	dE    = <D> - beta cov(E, D)
//	dC    = beta^2 (2 cov(E, D) - beta <(E-<E>)^2 (D-<D>)>)
//	dM    = -beta cov(m, D)
//	dchi  = -beta^2 <(m-<m>)^2 (D-<D>)>
func u1Thermo(ls *levelSet, n int, temps, fields []float64, g gridShape, slot, w, energy []float64) {
	for f, h := range fields {
		emin := math.Inf(1)
		for k, e := range ls.e0 {
			energy[k] = e - h*ls.m[k]
			emin = math.Min(emin, energy[k])
		}
		for i, temp := range temps {
			beta := 1 / temp
			var z float64
			for k, e := range energy {
				w[k] = math.Exp(-beta * (e - emin))
				z += w[k]
			}
			var eMean, mMean float64
			for k, e := range energy {
				w[k] /= z
				eMean += w[k] * e
				mMean += w[k] * ls.m[k]
			}
			var eVar, mVar float64
			for k, e := range energy {
				de, dm := e-eMean, ls.m[k]-mMean
				eVar += w[k] * de * de
				mVar += w[k] * dm * dm
			}
			slot[g.at(0, classLogZ, f, i)] = -beta*emin + math.Log(z) - float64(n)*math.Ln2
			slot[g.at(0, classEnergy, f, i)] = eMean
			slot[g.at(0, classHeat, f, i)] = beta * beta * eVar
			slot[g.at(0, classMagnetization, f, i)] = mMean
			slot[g.at(0, classSusceptibility, f, i)] = beta * mVar
			for p, d := range ls.d {
				dMean := energyDerivatives(beta, w, energy, d, eMean, g, f, i, 1+p, slot)
				var cMD, kMMD float64
				for k, m := range ls.m {
					dm := m - mMean
					x := w[k] * (d[k] - dMean) * dm
					cMD += x
					kMMD += x * dm
				}
				slot[g.at(1+p, classMagnetization, f, i)] = -beta * cMD
				slot[g.at(1+p, classSusceptibility, f, i)] = -beta * beta * kMMD
			}
		}
	}
}

// energyDerivatives stores the derivatives of ln Z, E and C along the
// Hellmann–Feynman elements d of levels with energies e and normalised
// weights w (<E> = eMean) in slot at derivative index r, and returns <d>.
func energyDerivatives(beta float64, w, e, d []float64, eMean float64, g gridShape, f, i, r int, slot []float64) float64 {
	var dMean float64
	for k := range e {
		dMean += w[k] * d[k]
	}
	var cED, kEED float64
	for k := range e {
		de := e[k] - eMean
		x := w[k] * (d[k] - dMean) * de
		cED += x
		kEED += x * de
	}
	slot[g.at(r, classLogZ, f, i)] = -beta * dMean
	slot[g.at(r, classEnergy, f, i)] = dMean - beta*cED
	slot[g.at(r, classHeat, f, i)] = beta * beta * (2*cED - beta*kEED)
	return dMean
}
