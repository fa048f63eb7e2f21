package lattice

import (
	"fmt"
	"runtime"
	"slices"
	"strings"

	"golang.org/x/sync/errgroup"
)

// MaxClassOrder bounds the cluster size of ClusterClasses; the canonical
// encoding numbers vertices in one byte. Enumerations far below it are
// already out of reach on two-dimensional lattices.
const MaxClassOrder = 64

// BondType is one bond of a built-in lattice's unit-cell tables: site From
// of every cell c is joined to site To of cell c + Offset (in units of the
// Bravais vectors). Each bond of the infinite lattice has exactly one
// type. Shell is 1 for nearest and 2 for next-nearest neighbours.
type BondType struct {
	Shell    int
	From, To int
	Offset   [3]int
}

// BondTypes returns the bond types of a built-in lattice kind with the
// given number of neighbour shells (0 means 1): the nearest-neighbour
// table, then with shells 2 the next-nearest table. The order is fixed
// and documented by the kind's unit cell; ClassOptions.BondKind is
// indexed by it. For example the ladder's nearest-neighbour types are the
// rung (0 -> 1, offset 0), the lower leg (0 -> 0, offset +x) and the
// upper leg (1 -> 1, offset +x).
func BondTypes(kind string, shells int) ([]BondType, error) {
	uc, ok := unitCells[kind]
	if !ok {
		return nil, fmt.Errorf("lattice kind %q: want one of %s", kind, strings.Join(kinds, ", "))
	}
	if shells == 0 {
		shells = 1
	}
	if shells != 1 && shells != 2 {
		return nil, fmt.Errorf("shells %d: want 1 or 2", shells)
	}
	var out []BondType
	for _, o := range uc.NN {
		out = append(out, BondType{Shell: 1, From: o.From, To: o.To, Offset: o.D})
	}
	if shells == 2 {
		for _, o := range uc.NNN {
			out = append(out, BondType{Shell: 2, From: o.From, To: o.To, Offset: o.D})
		}
	}
	return out, nil
}

// CellSites returns the number of sites in the unit cell of a built-in
// lattice kind (1 for chain, square, triangular and cubic; 2 for ladder
// and honeycomb; 3 for kagome).
func CellSites(kind string) (int, error) {
	uc, ok := unitCells[kind]
	if !ok {
		return 0, fmt.Errorf("lattice kind %q: want one of %s", kind, strings.Join(kinds, ", "))
	}
	return len(uc.Basis), nil
}

// ClassOptions says which clusters count as the same: two clusters are in
// one class when some bijection of their sites preserves site kinds, maps
// bonds onto bonds of the same kind and, for directed kinds, maps each
// bond's From end onto the From end.
type ClassOptions struct {
	// Shells is the number of neighbour shells of the interaction graph
	// (0 means 1); clusters are connected in it.
	Shells int
	// BondKind[t] is the kind (0..84) of bond type t of BondTypes. nil
	// means kind 0 for every nearest-neighbour type and kind 1 for every
	// next-nearest one: a model that distinguishes only the shells.
	BondKind []int
	// Directed[k] reports that bonds of kind k have distinguishable ends,
	// as a model term like Z_From X_To needs; missing entries (and nil)
	// mean undirected.
	Directed []bool
	// SiteKind[b] is the kind (0..254) of unit-cell site b; nil means one
	// kind for every site.
	SiteKind []int
}

// ClassBond is a bond of a cluster class between its sites I and J (0 ..
// Size-1). For a directed kind I is the From end, otherwise I < J.
type ClassBond struct{ I, J, Kind int }

// PerimeterCount is the number of embeddings per unit cell of a class
// whose perimeter (sites outside the cluster adjacent to it) has the
// given size.
type PerimeterCount struct {
	Perimeter int
	Count     int64
}

// ClusterClass is one class of identical connected clusters of the
// infinite lattice: its graph in canonical labelling and how often it
// occurs.
type ClusterClass struct {
	Size      int
	SiteKinds []int       // kind of each site, by canonical label
	Bonds     []ClassBond // sorted by (I, J)
	// Count is the number of embeddings per unit cell: the lattice
	// constant times the cell count, so Count/CellSites per site.
	Count int64
	// Perimeters splits Count by perimeter size, ascending; the
	// linked-cluster multipliers depend on it.
	Perimeters []PerimeterCount
	// Automorphisms is the order of the automorphism group of the
	// coloured graph (site kinds, bond kinds and directions kept).
	Automorphisms int64
	// Form is the canonical form: equal for two clusters exactly when
	// they are in the same class.
	Form string
}

// ClassList holds the cluster classes of a lattice kind up to an order.
type ClassList struct {
	Kind      string
	Order     int
	CellSites int
	BondTypes []BondType
	Options   ClassOptions // with the defaults filled in
	// Classes are sorted by size, then by canonical form.
	Classes []ClusterClass
}

// AnimalsPerCell returns out[n-1], the number of connected clusters of n
// sites per unit cell (fixed lattice animals), n = 1..Order.
func (c *ClassList) AnimalsPerCell() []int64 {
	out := make([]int64, c.Order)
	for i := range c.Classes {
		out[c.Classes[i].Size-1] += c.Classes[i].Count
	}
	return out
}

// ClassesBySize returns out[n-1], the number of classes of n sites.
func (c *ClassList) ClassesBySize() []int {
	out := make([]int, c.Order)
	for i := range c.Classes {
		out[c.Classes[i].Size-1]++
	}
	return out
}

// ClusterClasses enumerates the connected clusters of up to order sites
// of the infinite lattice of a built-in kind and reduces them to classes.
//
// Every cluster is counted once per translation: the clusters whose
// smallest site (in the order cell by cell, z, then y, then x, then site
// in cell) lies in one anchor cell are enumerated by the anchored ESU
// search of enumerate.go in an open region of the lattice so large that
// neither a cluster nor its perimeter reaches the region's edge. Each
// cluster's coloured graph (site kinds, bond kinds, directions) is put in
// canonical form (canonical.go); equal forms are one class. Canonical
// forms are computed on GOMAXPROCS workers; the result does not depend
// on their number.
func ClusterClasses(kind string, order int, opt ClassOptions) (*ClassList, error) {
	r, err := newClassRegion(kind, order, &opt)
	if err != nil {
		return nil, err
	}
	accs := r.enumerate()
	list := &ClassList{Kind: kind, Order: order, CellSites: r.nb, BondTypes: r.types, Options: opt}
	list.Classes = mergeClassAccs(accs)
	return list, nil
}

// classRegion is an open patch of the lattice around the anchor cell, in
// compressed adjacency form with the bond label of every edge end.
type classRegion struct {
	order  int
	nb     int
	types  []BondType
	start  []int32
	nbr    []int32
	label  []uint8 // 3*kind, +1 at a directed bond's From end, +2 at its To end
	sKind  []uint8 // per site
	anchor []int   // the sites of the anchor cell
}

func newClassRegion(kind string, order int, opt *ClassOptions) (*classRegion, error) {
	if kind == "graph" {
		return nil, fmt.Errorf("cluster classes need a translation-invariant lattice; a custom graph has none")
	}
	types, err := BondTypes(kind, opt.Shells)
	if err != nil {
		return nil, err
	}
	if order < 1 || order > MaxClassOrder {
		return nil, fmt.Errorf("cluster class order %d: want 1..%d", order, MaxClassOrder)
	}
	uc := unitCells[kind]
	nb := len(uc.Basis)
	if err := opt.fill(types, nb); err != nil {
		return nil, err
	}
	step := 0
	for _, t := range types {
		for a := 0; a < uc.Axes; a++ {
			step = max(step, abs(t.Offset[a]))
		}
	}
	// A cluster of order sites and its perimeter lie within order bonds
	// of the anchor, each bond moving at most step cells per axis.
	half := order*step + 1
	size := make([]int, uc.Axes)
	for a := range size {
		size[a] = 2*half + 1
	}
	var centre [3]int
	for a := range size {
		centre[a] = half
	}
	r := &classRegion{order: order, nb: nb, types: types}
	ncell := numCells(size)
	n := ncell * nb
	if n > MaxSites {
		return nil, fmt.Errorf("cluster class order %d on %s needs %d sites, more than %d", order, kind, n, MaxSites)
	}
	r.build(size, opt)
	c, _ := cellIndex(centre, size, false)
	for b := 0; b < nb; b++ {
		r.anchor = append(r.anchor, b+nb*c)
	}
	return r, nil
}

func abs(x int) int {
	if x < 0 {
		return -x
	}
	return x
}

// fill checks the options against the bond types and fills in defaults.
func (o *ClassOptions) fill(types []BondType, nb int) error {
	if o.Shells == 0 {
		o.Shells = 1
	}
	if o.BondKind == nil {
		o.BondKind = make([]int, len(types))
		for t, bt := range types {
			o.BondKind[t] = bt.Shell - 1
		}
	} else {
		o.BondKind = slices.Clone(o.BondKind)
	}
	if len(o.BondKind) != len(types) {
		return fmt.Errorf("bond kinds: %d given for %d bond types", len(o.BondKind), len(types))
	}
	kinds := 0
	for t, k := range o.BondKind {
		if k < 0 || k > 84 {
			return fmt.Errorf("bond kinds[%d]: kind %d out of range 0..84", t, k)
		}
		kinds = max(kinds, k+1)
	}
	dir := make([]bool, kinds)
	copy(dir, o.Directed)
	o.Directed = dir
	if o.SiteKind == nil {
		o.SiteKind = make([]int, nb)
	} else {
		o.SiteKind = slices.Clone(o.SiteKind)
	}
	if len(o.SiteKind) != nb {
		return fmt.Errorf("site kinds: %d given for %d sites per cell", len(o.SiteKind), nb)
	}
	for b, k := range o.SiteKind {
		if k < 0 || k > 254 {
			return fmt.Errorf("site kinds[%d]: kind %d out of range 0..254", b, k)
		}
	}
	return nil
}

// build lays the bond types over every cell of the open region.
func (r *classRegion) build(size []int, opt *ClassOptions) {
	nb := r.nb
	ncell := numCells(size)
	n := ncell * nb
	type end struct {
		to    int32
		label uint8
	}
	adj := make([][]end, n)
	table := make([]offset, len(r.types))
	for t, bt := range r.types {
		table[t] = offset{From: bt.From, To: bt.To, D: bt.Offset}
	}
	eachCellBond(nb, size, false, table, func(t, i, j int) {
		k := opt.BondKind[t]
		li, lj := uint8(3*k), uint8(3*k)
		if opt.Directed[k] {
			li, lj = li+1, lj+2
		}
		adj[i] = append(adj[i], end{int32(j), li})
		adj[j] = append(adj[j], end{int32(i), lj})
	})
	r.start = make([]int32, n+1)
	r.sKind = make([]uint8, n)
	for i, a := range adj {
		slices.SortFunc(a, func(p, q end) int { return int(p.to - q.to) })
		for _, e := range a {
			r.nbr = append(r.nbr, e.to)
			r.label = append(r.label, e.label)
		}
		r.start[i+1] = int32(len(r.nbr))
		r.sKind[i] = uint8(opt.SiteKind[i%nb])
	}
}

// classAcc accumulates one class while enumerating.
type classAcc struct {
	form      string
	size      int
	autos     int64
	perimeter []int64 // embeddings by perimeter size
}

// classBatch is a batch of clusters handed from the enumeration to the
// canonical-form workers: cluster k is sites[start[k]:start[k+1]].
type classBatch struct {
	sites []int32
	start []int32
}

const classBatchSize = 1 << 12

// enumerate runs the anchored enumeration on one goroutine and the
// canonical forms on GOMAXPROCS others, each with its own accumulators.
func (r *classRegion) enumerate() []map[string]*classAcc {
	workers := runtime.GOMAXPROCS(0)
	batches := make(chan *classBatch, 2*workers)
	free := make(chan *classBatch, 4*workers)
	accs := make([]map[string]*classAcc, workers)
	var g errgroup.Group
	for w := 0; w < workers; w++ {
		accs[w] = make(map[string]*classAcc)
		g.Go(func() error {
			cw := newClassWorker(r)
			for b := range batches {
				for k := 0; k+1 < len(b.start); k++ {
					cw.add(accs[w], b.sites[b.start[k]:b.start[k+1]])
				}
				select {
				case free <- b:
				default:
				}
			}
			return nil
		})
	}
	e := newEnumerator(r.start, r.nbr)
	batch := &classBatch{start: []int32{0}}
	for _, a := range r.anchor {
		e.reset(r.order, int32(a), func(sites []int) bool {
			for _, s := range sites {
				batch.sites = append(batch.sites, int32(s))
			}
			batch.start = append(batch.start, int32(len(batch.sites)))
			if len(batch.start) > classBatchSize {
				batches <- batch
				select {
				case batch = <-free:
					batch.sites, batch.start = batch.sites[:0], batch.start[:1]
				default:
					batch = &classBatch{start: []int32{0}}
				}
			}
			return true
		}, nil)
		e.run([]int{a})
	}
	batches <- batch
	close(batches)
	g.Wait()
	return accs
}

// classWorker canonicalises clusters of the region.
type classWorker struct {
	r      *classRegion
	local  []int32 // region site -> 1 + position in the cluster, 0 outside
	stamp  []int32 // perimeter marks, tagged by serial
	serial int32
	g      colouredGraph
	canon  canonizer
}

func newClassWorker(r *classRegion) *classWorker {
	n := len(r.start) - 1
	return &classWorker{r: r, local: make([]int32, n), stamp: make([]int32, n)}
}

// add finds the class of one cluster (sites ascending) and counts it.
func (w *classWorker) add(accs map[string]*classAcc, sites []int32) {
	r := w.r
	for k, s := range sites {
		w.local[s] = int32(k + 1)
	}
	w.serial++
	g := &w.g
	g.colour = g.colour[:0]
	g.start = append(g.start[:0], 0)
	g.nbr = g.nbr[:0]
	g.label = g.label[:0]
	perimeter := 0
	for _, s := range sites {
		g.colour = append(g.colour, r.sKind[s])
		for e := r.start[s]; e < r.start[s+1]; e++ {
			u := r.nbr[e]
			if q := w.local[u]; q > 0 {
				g.nbr = append(g.nbr, q-1)
				g.label = append(g.label, r.label[e])
			} else if w.stamp[u] != w.serial {
				w.stamp[u] = w.serial
				perimeter++
			}
		}
		g.start = append(g.start, int32(len(g.nbr)))
	}
	for _, s := range sites {
		w.local[s] = 0
	}
	form, _, autos := w.canon.canonicalForm(g)
	acc, ok := accs[string(form)]
	if !ok {
		acc = &classAcc{form: string(form), size: len(sites), autos: autos}
		accs[acc.form] = acc
	}
	for len(acc.perimeter) <= perimeter {
		acc.perimeter = append(acc.perimeter, 0)
	}
	acc.perimeter[perimeter]++
}

// mergeClassAccs adds the workers' accumulators and sorts the classes.
func mergeClassAccs(accs []map[string]*classAcc) []ClusterClass {
	all := make(map[string]*classAcc)
	for _, m := range accs {
		for form, a := range m {
			b, ok := all[form]
			if !ok {
				all[form] = a
				continue
			}
			for len(b.perimeter) < len(a.perimeter) {
				b.perimeter = append(b.perimeter, 0)
			}
			for p, c := range a.perimeter {
				b.perimeter[p] += c
			}
		}
	}
	out := make([]ClusterClass, 0, len(all))
	for _, a := range all {
		c := decodeClass(a.form)
		c.Automorphisms = a.autos
		for p, n := range a.perimeter {
			if n > 0 {
				c.Perimeters = append(c.Perimeters, PerimeterCount{p, n})
				c.Count += n
			}
		}
		out = append(out, c)
	}
	slices.SortFunc(out, func(a, b ClusterClass) int {
		if a.Size != b.Size {
			return a.Size - b.Size
		}
		return strings.Compare(a.Form, b.Form)
	})
	return out
}

// decodeClass reads the graph of a class from its canonical form (see
// canonizer.leaf for the encoding).
func decodeClass(form string) ClusterClass {
	n := int(form[0])
	c := ClusterClass{Size: n, Form: form, SiteKinds: make([]int, n)}
	for p := 0; p < n; p++ {
		c.SiteKinds[p] = int(form[1+p])
	}
	k := 1 + n
	for p := 0; p < n; p++ {
		for ; form[k] != 0xFF; k += 2 {
			q, label := int(form[k]), int(form[k+1])
			b := ClassBond{I: p, J: q, Kind: label / 3}
			if label%3 == 2 {
				b.I, b.J = q, p
			}
			c.Bonds = append(c.Bonds, b)
		}
		k++
	}
	slices.SortFunc(c.Bonds, func(a, b ClassBond) int {
		if a.I != b.I {
			return a.I - b.I
		}
		return a.J - b.J
	})
	return c
}
