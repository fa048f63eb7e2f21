package fit

import (
	"fmt"
	"slices"
	"sort"

	"warmfit/cluster"
	"warmfit/lattice"
)

// Params maps fitted parameters theta to term coefficients lambda = A theta,
// where A is the 0/1 matrix that sends every term to its parameter: terms
// sharing a non-empty Group share one parameter, every other term has its
// own. Parameters are numbered in the order of their first term.
type Params struct {
	// Of[k] is the parameter of term k.
	Of []int
	// Members[p] lists the terms of parameter p, increasing.
	Members [][]int
	// Names[p] is the group name, or the term key for an ungrouped term.
	Names []string
}

// NewParams builds the term-to-parameter map of terms.
func NewParams(terms []lattice.Term) *Params {
	p := &Params{Of: make([]int, len(terms))}
	byGroup := map[string]int{}
	for k, t := range terms {
		if t.Group != "" {
			if q, ok := byGroup[t.Group]; ok {
				p.Of[k] = q
				p.Members[q] = append(p.Members[q], k)
				continue
			}
			byGroup[t.Group] = len(p.Members)
		}
		p.Of[k] = len(p.Members)
		p.Members = append(p.Members, []int{k})
		name := t.Group
		if name == "" {
			name = t.Key()
		}
		p.Names = append(p.Names, name)
	}
	return p
}

// NumParams returns the number of fitted parameters.
func (p *Params) NumParams() int { return len(p.Members) }

// NumTerms returns the number of terms.
func (p *Params) NumTerms() int { return len(p.Of) }

// Tied reports whether some parameter is shared by several terms.
func (p *Params) Tied() bool { return p.NumParams() < p.NumTerms() }

// Expand sets lambda = A theta.
func (p *Params) Expand(lambda, theta []float64) {
	p.checkLens(lambda, theta)
	for k, q := range p.Of {
		lambda[k] = theta[q]
	}
}

// Reduce sets theta = A^T lambda: the sum over each parameter's terms.
func (p *Params) Reduce(theta, lambda []float64) {
	p.checkLens(lambda, theta)
	for q, m := range p.Members {
		var s float64
		for _, k := range m {
			s += lambda[k]
		}
		theta[q] = s
	}
}

// Average sets theta to the mean of lambda over each parameter's terms,
// the least-squares inverse of Expand.
func (p *Params) Average(theta, lambda []float64) {
	p.Reduce(theta, lambda)
	for q, m := range p.Members {
		theta[q] /= float64(len(m))
	}
}

func (p *Params) checkLens(lambda, theta []float64) {
	if len(lambda) != len(p.Of) || len(theta) != len(p.Members) {
		panic(fmt.Sprintf("fit: Params with %d terms and %d parameters given vectors of %d and %d",
			len(p.Of), len(p.Members), len(lambda), len(theta)))
	}
}

// termMatrix is the read interface of a symmetric term-space matrix:
// the expansion's response or a data covariance (*cluster.SparseSym), or
// a diagonal covariance (diagMatrix).
type termMatrix interface {
	Dim() int
	DoRow(i int, fn func(j int, v float64))
}

// Project returns s A^T M A in parameter space for a symmetric term-space
// matrix M given row by row. The sums run in a fixed order (the members
// of each parameter in turn, each row as given), so the result is
// reproducible bit for bit.
func (p *Params) project(m termMatrix, s float64) *cluster.SparseSym {
	np := p.NumParams()
	rowPtr := make([]int, np+1)
	var outCol []int32
	var outVal []float64
	acc := make([]float64, np) // dense row accumulator
	seen := make([]bool, np)
	var cols []int32
	for q, members := range p.Members {
		cols = cols[:0]
		for _, k := range members {
			m.DoRow(k, func(j int, v float64) {
				c := p.Of[j]
				if !seen[c] {
					seen[c] = true
					cols = append(cols, int32(c))
				}
				acc[c] += v
			})
		}
		slices.Sort(cols)
		for _, c := range cols {
			outCol = append(outCol, c)
			outVal = append(outVal, s*acc[c])
			acc[c], seen[c] = 0, false
		}
		rowPtr[q+1] = len(outCol)
	}
	return cluster.NewSparseSymCSR(np, rowPtr, outCol, outVal)
}

// spatialOrder lists the parameters by the smallest site of their terms
// (ties by number), so that consecutive parameters act close together on
// lattices numbered row by row.
func (p *Params) spatialOrder(terms []lattice.Term) []int {
	anchor := make([]int, p.NumParams())
	order := make([]int, p.NumParams())
	for q, m := range p.Members {
		order[q] = q
		anchor[q] = terms[m[0]].Sites[0]
		for _, k := range m {
			anchor[q] = min(anchor[q], terms[k].Sites[0])
		}
	}
	sort.SliceStable(order, func(a, b int) bool { return anchor[order[a]] < anchor[order[b]] })
	return order
}
