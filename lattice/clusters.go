package lattice

import (
	"fmt"
	"runtime"
	"slices"

	"golang.org/x/sync/errgroup"
)

// Clusters are connected site sets of the interaction graph: sets of
// sites whose induced subgraph is connected. The linked-cluster expansion
// sums over them. All enumerations report each set once, with its sites
// sorted ascending, in an order fixed by the lattice alone.
//
// The slice handed to a visit function is reused between calls: read it,
// or copy it, but do not modify or keep it.

func (l *Lattice) getEnumerator() *enumerator {
	if l.scratch == nil {
		panic("lattice: Lattice not made by Build, Open, FromGraph or DecodeLatticeJSON")
	}
	return l.scratch.Get().(*enumerator)
}

func (l *Lattice) putEnumerator(e *enumerator) { e.visit, e.prune = nil, nil; l.scratch.Put(e) }

// EachClusterFrom calls visit for every connected cluster of at most
// maxSize sites whose smallest site is anchor (the anchor alone first).
// The sites are sorted ascending, in a slice reused between calls. visit
// returning false stops the enumeration; EachClusterFrom returns false
// exactly when it was stopped. It panics if anchor is not a site.
func (l *Lattice) EachClusterFrom(anchor, maxSize int, visit func(sites []int) bool) bool {
	if anchor < 0 || anchor >= l.NumSites() {
		panic(fmt.Sprintf("lattice: anchor %d out of range [0,%d)", anchor, l.NumSites()))
	}
	if maxSize < 1 {
		return true
	}
	e := l.getEnumerator()
	defer l.putEnumerator(e)
	e.reset(maxSize, int32(anchor), visit, nil)
	return e.run([]int{anchor})
}

// EachCluster calls visit for every connected cluster of at most maxSize
// sites, anchor by anchor (smallest site ascending). The sites are sorted
// ascending, in a slice reused between calls; visit returning false
// stops the enumeration.
func (l *Lattice) EachCluster(maxSize int, visit func(sites []int) bool) {
	if maxSize < 1 {
		return
	}
	e := l.getEnumerator()
	defer l.putEnumerator(e)
	seed := []int{0}
	for a := 0; a < l.NumSites(); a++ {
		e.reset(maxSize, int32(a), visit, nil)
		seed[0] = a
		if !e.run(seed) {
			return
		}
	}
}

// AnchorBlocks splits the sites into contiguous blocks of anchors
// [lo, hi), the units of parallel work over clusters (EachClusterFrom
// each anchor of a block). The split depends on the number of sites
// only, so every pass over the blocks, with any number of workers, sums
// in the same order: the basis of bit-identical parallel results.
func (l *Lattice) AnchorBlocks() [][2]int {
	n := l.NumSites()
	nb := min(n, 512)
	blocks := make([][2]int, nb)
	for b := range blocks {
		blocks[b] = [2]int{b * n / nb, (b + 1) * n / nb}
	}
	return blocks
}

// countBlocks counts the clusters of each anchor block in parallel:
// out[b][n-1] is the number of clusters of n sites anchored in block b.
func (l *Lattice) countBlocks(maxSize int) [][]int64 {
	blocks := l.AnchorBlocks()
	out := make([][]int64, len(blocks))
	var g errgroup.Group
	g.SetLimit(runtime.GOMAXPROCS(0))
	for b, blk := range blocks {
		g.Go(func() error {
			counts := make([]int64, maxSize)
			e := l.getEnumerator()
			defer l.putEnumerator(e)
			seed := []int{0}
			for a := blk[0]; a < blk[1]; a++ {
				e.reset(maxSize, int32(a), nil, counts)
				seed[0] = a
				e.run(seed)
			}
			out[b] = counts
			return nil
		})
	}
	g.Wait()
	return out
}

// CountClusters returns counts with counts[n-1] the number of connected
// clusters of n sites, n = 1..maxSize. Anchors are counted in parallel
// (GOMAXPROCS workers); integer counts make the result independent of
// the schedule. Counting skips building the largest clusters, so it is
// several times faster than EachCluster.
func (l *Lattice) CountClusters(maxSize int) []int64 {
	if maxSize < 1 {
		return nil
	}
	total := make([]int64, maxSize)
	for _, counts := range l.countBlocks(maxSize) {
		for k, c := range counts {
			total[k] += c
		}
	}
	return total
}

// ClustersContaining calls visit for every connected cluster of at most
// maxSize sites that contains all of support, each once, sites sorted
// ascending in a reused slice. support need not be connected itself; the
// clusters joining its pieces are found by extension with a distance
// bound. An empty support means every cluster. visit returning false
// stops. It panics on repeated or out-of-range support sites.
func (l *Lattice) ClustersContaining(support []int, maxSize int, visit func(sites []int) bool) {
	set, ok := sortedSet(support, l.NumSites())
	if !ok {
		panic(fmt.Sprintf("lattice: ClustersContaining of invalid site set %v", support))
	}
	if len(set) == 0 {
		l.EachCluster(maxSize, visit)
		return
	}
	if len(set) > maxSize {
		return
	}
	e := l.getEnumerator()
	defer l.putEnumerator(e)
	if l.Connected(set) {
		// Treating the support as one contracted site, ESU from it
		// yields each connected superset once.
		e.reset(maxSize, -1, visit, nil)
		e.run(set)
		return
	}
	// Grow from the first support site and skip subtrees that cannot
	// reach every support site within the size budget.
	d := newDistanceBound(l, set)
	e.reset(maxSize, -1, func(sites []int) bool {
		if !containsAll(sites, set) {
			return true
		}
		return visit(sites)
	}, nil)
	e.prune = func() bool { return len(e.sub)+d.farthest(e.sub, maxSize-len(e.sub)) > maxSize }
	e.run(set[:1])
}

// containsAll reports whether sorted sites include every element of sorted want.
func containsAll(sites, want []int) bool {
	k := 0
	for _, s := range sites {
		if k < len(want) && s == want[k] {
			k++
		}
	}
	return k == len(want)
}

// distanceBound measures how far the support sites lie from a growing set.
type distanceBound struct {
	l       *Lattice
	support []int
	stamp   []int32 // stamp[v] == epoch: v reached in this search
	dist    []int32
	epoch   int32
	queue   []int
}

func newDistanceBound(l *Lattice, support []int) *distanceBound {
	n := l.NumSites()
	return &distanceBound{l: l, support: support, stamp: make([]int32, n), dist: make([]int32, n)}
}

// farthest returns the largest graph distance from the set to a support
// site, or limit+1 when some support site lies farther than limit.
// Adding a site at distance d needs at least d more sites.
func (d *distanceBound) farthest(set []int, limit int) int {
	d.epoch++
	if d.epoch == 0 {
		clear(d.stamp)
		d.epoch = 1
	}
	d.queue = d.queue[:0]
	for _, s := range set {
		d.stamp[s] = d.epoch
		d.dist[s] = 0
		d.queue = append(d.queue, s)
	}
	for k := 0; k < len(d.queue); k++ {
		v := d.queue[k]
		if int(d.dist[v]) >= limit {
			continue
		}
		for _, u := range d.l.adj[v] {
			if d.stamp[u] != d.epoch {
				d.stamp[u] = d.epoch
				d.dist[u] = d.dist[v] + 1
				d.queue = append(d.queue, u)
			}
		}
	}
	far := 0
	for _, t := range d.support {
		if d.stamp[t] != d.epoch {
			return limit + 1
		}
		far = max(far, int(d.dist[t]))
	}
	return far
}

// EachConnectedSubcluster calls visit for every non-empty connected
// proper subset of sites (the induced subgraph of each is connected),
// each once, sites sorted ascending in a reused slice. sites is normally
// a connected cluster; for a disconnected set it yields the connected
// subsets of its pieces. visit returning false stops. It panics on
// repeated or out-of-range sites.
func (l *Lattice) EachConnectedSubcluster(sites []int, visit func(sub []int) bool) {
	set, ok := sortedSet(sites, l.NumSites())
	if !ok {
		panic(fmt.Sprintf("lattice: EachConnectedSubcluster of invalid site set %v", sites))
	}
	if len(set) < 2 {
		return
	}
	// Enumerate on the induced subgraph with local indices; local order
	// follows global order, so mapped sets stay sorted.
	start := make([]int32, len(set)+1)
	var nbr []int32
	for k, s := range set {
		for _, j := range l.adj[s] {
			if m, in := slices.BinarySearch(set, j); in {
				nbr = append(nbr, int32(m))
			}
		}
		start[k+1] = int32(len(nbr))
	}
	global := make([]int, 0, len(set))
	e := newEnumerator(start, nbr)
	local := func(sub []int) bool {
		global = global[:0]
		for _, k := range sub {
			global = append(global, set[k])
		}
		return visit(global)
	}
	seed := []int{0}
	for a := range set {
		e.reset(len(set)-1, int32(a), local, nil)
		seed[0] = a
		if !e.run(seed) {
			return
		}
	}
}
