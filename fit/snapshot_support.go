package fit

import (
	"fmt"
	"math"

	"warmfit/lattice"
)

// supportIndex groups terms by support so that the terms a basis serves
// are found with one table lookup per support: a basis shows exactly one
// letter string on a support, hence serves at most one term on it.
// Kept covariance pairs are grouped the same way, by pair of supports.
type supportIndex struct {
	groups  []supportGroup
	termSup []int32 // support of each term
	pairs   []supportPair
	table   []int32 // all supportPair tables, one after another
}

type supportGroup struct {
	sites []int32
	slots []int32 // term by letter code (base 3, X=0 Y=1 Z=2, first site lowest digit); -1 if none
}

// supportPair lists the kept covariance pairs between terms on supports
// s and t: supportIndex.table[off + codeS + ns*codeT] is -1 or 2k + swap
// for pair k, swap being 1 when the term on s has the larger index (the
// pair's sums are kept lower index first); ns is the number of slots of s.
type supportPair struct {
	s, t, ns, off int32
}

// maxSupport bounds the sites of one term: its support group has 3^size
// slots, and codes must fit directBuffer's int16 values.
const maxSupport = 8

// letterCode is X=0, Y=1, Z=2.
func letterCode(c byte) int { return int(c - 'X') }

func newSupportIndex(terms []lattice.Term, pairsOf [][]pairRef, npairs int) (*supportIndex, error) {
	if len(terms) > math.MaxInt32/4 || npairs > math.MaxInt32/4 {
		return nil, fmt.Errorf("%d terms and %d covariance pairs: too many", len(terms), npairs)
	}
	idx := &supportIndex{termSup: make([]int32, len(terms))}
	for k, t := range terms {
		if len(t.Sites) > maxSupport {
			return nil, fmt.Errorf("term %d (%s): supports of more than %d sites are not supported", k, t.Key(), maxSupport)
		}
	}
	byKey := map[string]int32{}
	for k, t := range terms {
		key := lattice.SitesString(t.Sites)
		g, ok := byKey[key]
		if !ok {
			size := 1
			for range t.Sites {
				size *= 3
			}
			slots := make([]int32, size)
			for i := range slots {
				slots[i] = -1
			}
			sites := make([]int32, len(t.Sites))
			for i, s := range t.Sites {
				sites[i] = int32(s)
			}
			g = int32(len(idx.groups))
			idx.groups = append(idx.groups, supportGroup{sites: sites, slots: slots})
			byKey[key] = g
		}
		code := termCode(t)
		if prev := idx.groups[g].slots[code]; prev >= 0 {
			return nil, fmt.Errorf("terms %d and %d are both %s", prev, k, t.Key())
		}
		idx.groups[g].slots[code] = int32(k)
		idx.termSup[k] = g
	}
	// Tables are built with the pair numbers of pairsOf, then pairs are
	// renumbered in table order, so that a shot, visiting support pairs
	// in order, sweeps the pair accumulators forwards in memory.
	spOf := map[[2]int32]int32{}
	for a, refs := range pairsOf {
		for _, r := range refs {
			b := int(r.other)
			sa, sb := idx.termSup[a], idx.termSup[b]
			ca, cb := termCode(terms[a]), termCode(terms[b])
			if sa > sb {
				sa, sb, ca, cb = sb, sa, cb, ca
			}
			key := [2]int32{sa, sb}
			p, ok := spOf[key]
			if !ok {
				ns, nt := len(idx.groups[sa].slots), len(idx.groups[sb].slots)
				p = int32(len(idx.pairs))
				idx.pairs = append(idx.pairs, supportPair{s: sa, t: sb, ns: int32(ns), off: int32(len(idx.table))})
				for range ns * nt {
					idx.table = append(idx.table, -1)
				}
				spOf[key] = p
			}
			sp := idx.pairs[p]
			idx.table[int(sp.off)+ca+int(sp.ns)*cb] = r.pair
		}
	}
	renumber := make([]int32, npairs)
	next := int32(0)
	for _, sp := range idx.pairs {
		nt := len(idx.groups[sp.t].slots)
		for cb := 0; cb < nt; cb++ {
			for ca := 0; ca < int(sp.ns); ca++ {
				i := int(sp.off) + ca + int(sp.ns)*cb
				old := idx.table[i]
				if old < 0 {
					continue
				}
				renumber[old] = next
				swap := int32(0)
				if idx.groups[sp.s].slots[ca] > idx.groups[sp.t].slots[cb] {
					swap = 1
				}
				idx.table[i] = 2*next + swap
				next++
			}
		}
	}
	for _, refs := range pairsOf {
		for i := range refs {
			refs[i].pair = renumber[refs[i].pair]
		}
	}
	return idx, nil
}

// termCode is the slot of t within its support group.
func termCode(t lattice.Term) int {
	code, mul := 0, 1
	for i := range t.Sites {
		code += letterCode(t.Pauli[i]) * mul
		mul *= 3
	}
	return code
}
