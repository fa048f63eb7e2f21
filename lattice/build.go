package lattice

import (
	"fmt"
	"slices"
	"strings"
)

// Build constructs a built-in lattice from its specification: site
// coordinates, the nearest-neighbour bonds NN and the next-nearest shell
// NNN, both from the kind's unit-cell tables. Sites are numbered with x
// fastest, then y, then z, and site = b + nb*cell for a cell of nb sites.
// Bonds are sorted by (I, J).
//
// A periodic size so small that a bond would join a site to itself or
// two bonds would join the same pair is refused, for the NN shell and,
// when Shells is 2, for the NNN shell and its overlap with NN. When Shells
// is 1 the NNN list is informational: on such small tori its repeated
// pairs are merged and pairs that are already NN bonds or self pairs left
// out. Errors are *SpecError.
func Build(spec Spec) (*Lattice, error) {
	if spec.Kind == "graph" {
		return nil, specErrorf(spec.String(), "custom graphs are built with FromGraph or read from a file")
	}
	uc, err := spec.check()
	if err != nil {
		return nil, err
	}
	if spec.Shells == 0 {
		spec.Shells = 1
	}
	spec.Size = slices.Clone(spec.Size)
	periodic := spec.Boundary == Periodic
	nn := cellBonds(uc, spec.Size, periodic, uc.NN)
	nnn := cellBonds(uc, spec.Size, periodic, uc.NNN)
	if periodic {
		if problem := wrapProblem(nn, nnn, spec.Shells); problem != "" {
			return nil, specErrorf(spec.String(), "periodic size %s is too small: %s%s",
				sizeString(spec.Size), problem, minimumHint(uc, spec))
		}
		if spec.Shells == 1 {
			nnn = dropRepeats(nnn, nn)
		}
	}
	l := &Lattice{Spec: spec, Coords: cellCoords(uc, spec.Size), NN: nn, NNN: nnn}
	l.finish()
	return l, nil
}

func sizeString(size []int) string {
	parts := make([]string, len(size))
	for k, n := range size {
		parts[k] = fmt.Sprint(n)
	}
	return strings.Join(parts, "x")
}

// cellIndex returns the cell at integer position x (x fastest, then y,
// then z) and whether x lies inside the sizes after wrapping, if periodic.
func cellIndex(x [3]int, size []int, periodic bool) (int, bool) {
	c, stride := 0, 1
	for a, l := range size {
		v := x[a]
		if v < 0 || v >= l {
			if !periodic {
				return 0, false
			}
			v = ((v % l) + l) % l
		}
		c += v * stride
		stride *= l
	}
	return c, true
}

func numCells(size []int) int {
	n := 1
	for _, l := range size {
		n *= l
	}
	return n
}

// cellPosition returns the integer position of cell c.
func cellPosition(c int, size []int) [3]int {
	var x [3]int
	for a, l := range size {
		x[a] = c % l
		c /= l
	}
	return x
}

func cellCoords(uc *unitCell, size []int) [][]float64 {
	nb := len(uc.Basis)
	ncell := numCells(size)
	flat := make([]float64, ncell*nb*uc.Dim)
	coords := make([][]float64, ncell*nb)
	for c := 0; c < ncell; c++ {
		x := cellPosition(c, size)
		for b, base := range uc.Basis {
			p := flat[:uc.Dim:uc.Dim]
			flat = flat[uc.Dim:]
			copy(p, base)
			for a := range size {
				for d := range p {
					p[d] += float64(x[a]) * uc.A[a][d]
				}
			}
			coords[b+nb*c] = p
		}
	}
	return coords
}

// cellBonds lays the offset table over every cell. Pairs are oriented
// I < J and sorted; with periodic wrapping on a small torus they may
// contain self pairs and repeats, which wrapProblem detects.
func cellBonds(uc *unitCell, size []int, periodic bool, table []offset) []Bond {
	bonds := make([]Bond, 0, numCells(size)*len(table))
	eachCellBond(len(uc.Basis), size, periodic, table, func(_, i, j int) {
		bonds = append(bonds, Bond{min(i, j), max(i, j)})
	})
	slices.SortFunc(bonds, compareBonds)
	return bonds
}

// eachCellBond calls f(k, i, j) for every cell and every entry k of the
// offset table whose bond from site i of the cell reaches site j inside
// the sizes (after wrapping, if periodic), cell by cell.
func eachCellBond(nb int, size []int, periodic bool, table []offset, f func(k, i, j int)) {
	for c := 0; c < numCells(size); c++ {
		x := cellPosition(c, size)
		for k, o := range table {
			var y [3]int
			for a := range size {
				y[a] = x[a] + o.D[a]
			}
			t, ok := cellIndex(y, size, periodic)
			if !ok {
				continue
			}
			f(k, o.From+nb*c, o.To+nb*t)
		}
	}
}

func compareBonds(a, b Bond) int {
	if a.I != b.I {
		return a.I - b.I
	}
	return a.J - b.J
}

// wrapProblem describes the first self or repeated bond in the sorted
// shells, or returns "".
func wrapProblem(nn, nnn []Bond, shells int) string {
	if p := repeatProblem(nn, "nearest-neighbour"); p != "" {
		return p
	}
	if shells < 2 {
		return ""
	}
	if p := repeatProblem(nnn, "next-nearest-neighbour"); p != "" {
		return p
	}
	for _, b := range nnn {
		if _, found := slices.BinarySearchFunc(nn, b, compareBonds); found {
			return fmt.Sprintf("sites %d and %d would be both nearest and next-nearest neighbours", b.I, b.J)
		}
	}
	return ""
}

func repeatProblem(bonds []Bond, shell string) string {
	for k, b := range bonds {
		if b.I == b.J {
			return fmt.Sprintf("site %d would have a %s bond to itself", b.I, shell)
		}
		if k > 0 && bonds[k-1] == b {
			return fmt.Sprintf("the %s bond %d-%d would be doubled", shell, b.I, b.J)
		}
	}
	return ""
}

// dropRepeats removes self pairs, repeats and NN pairs from a sorted NNN list.
func dropRepeats(nnn, nn []Bond) []Bond {
	out := nnn[:0]
	for k, b := range nnn {
		if b.I == b.J || (k > 0 && nnn[k-1] == b) {
			continue
		}
		if _, found := slices.BinarySearchFunc(nn, b, compareBonds); found {
			continue
		}
		out = append(out, b)
	}
	return out
}

// minimumPeriodicSize returns the smallest periodic size along axis that
// builds cleanly when every other axis is long, by trying sizes in turn.
func minimumPeriodicSize(uc *unitCell, shells, axis int) int {
	const long = 9 // longer than any offset table reaches
	for m := 1; m < long; m++ {
		size := make([]int, uc.Axes)
		for a := range size {
			size[a] = long
		}
		size[axis] = m
		nn := cellBonds(uc, size, true, uc.NN)
		nnn := cellBonds(uc, size, true, uc.NNN)
		if wrapProblem(nn, nnn, shells) == "" {
			return m
		}
	}
	return long
}

// minimumHint names the axes whose periodic size is below its minimum.
func minimumHint(uc *unitCell, spec Spec) string {
	var need []string
	for a, l := range spec.Size {
		if m := minimumPeriodicSize(uc, spec.Shells, a); l < m {
			need = append(need, fmt.Sprintf("%d along %s", m, axisName(a)))
		}
	}
	shell := "nearest neighbours"
	if spec.Shells == 2 {
		shell = "two neighbour shells"
	}
	if len(need) == 0 {
		return fmt.Sprintf(" (periodic %s with %s needs larger sizes)", spec.Kind, shell)
	}
	return fmt.Sprintf(" (periodic %s with %s needs at least %s)", spec.Kind, shell, strings.Join(need, ", "))
}
