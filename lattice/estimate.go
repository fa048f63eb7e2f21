package lattice

import "math"

// Cost model of the estimate: at most estimateAnchors anchors, spread
// evenly over the sites, are counted exactly while the work stays under
// estimateBudget search nodes; larger sizes are extrapolated.
const (
	estimateAnchors = 64
	estimateBudget  = 1 << 22
)

// EstimateClusters estimates, cheaply, how many connected clusters of at
// most maxSize sites the lattice has and how many bytes they take stored
// compactly (a 32-bit index per site and a 64-bit offset per cluster), so that callers can refuse work past a limit before
// starting it (see EstimateClusterSizes for the method).
func (l *Lattice) EstimateClusters(maxSize int) (count int64, bytes int64) {
	var c, b float64
	for k, t := range l.EstimateClusterSizes(maxSize) {
		c += t
		b += t * clusterBytes(k+1)
	}
	return clampInt64(c), clampInt64(b)
}

// EstimateClusterSizes estimates the number of connected clusters of
// each size: out[s-1] for s = 1..maxSize. It is the one cluster-count
// estimate of the project: cost models (package cluster) weigh it by the
// price of each size.
//
// It counts exactly the clusters anchored at up to 64 evenly spaced
// sites, scaled to all sites (exact when the lattice has at most 64
// sites), increasing the size while the work stays small (about 4x10^6
// search nodes, a few tens of milliseconds). Sizes beyond that are
// extrapolated from the growth ratio of successive counts, whose
// increase is continued with geometrically shrinking steps, as
// lattice-animal ratios approach their limit from below. On regular
// lattices the extrapolated total is typically within tens of percent.
func (l *Lattice) EstimateClusterSizes(maxSize int) []float64 {
	n := l.NumSites()
	if n == 0 || maxSize < 1 {
		return nil
	}
	anchors := make([]int, min(n, estimateAnchors))
	for k := range anchors {
		anchors[k] = (2*k + 1) * n / (2 * len(anchors))
	}
	scale := float64(n) / float64(len(anchors))

	var exact []float64 // estimated totals of sizes 1..len(exact)
	e := l.getEnumerator()
	defer l.putEnumerator(e)
	spent := 0.0
	for size := 1; size <= maxSize; size++ {
		counts := make([]int64, size)
		seed := []int{0}
		for _, a := range anchors {
			e.reset(size, int32(a), nil, counts)
			seed[0] = a
			e.run(seed)
		}
		exact = exact[:0]
		work := 0.0
		for _, c := range counts {
			exact = append(exact, float64(c)*scale)
			work += float64(c)
		}
		// Search nodes of this pass: every set below the top size.
		spent += work - float64(counts[size-1])
		// The next pass visits every set counted now.
		if spent+work > estimateBudget {
			break
		}
	}
	return extrapolate(exact, maxSize)
}

// clusterBytes is the compact storage of one cluster of n sites: a 32-bit
// index per site and a 64-bit offset.
func clusterBytes(n int) float64 { return 4*float64(n) + 8 }

func clampInt64(x float64) int64 {
	if x >= math.MaxInt64/2 || math.IsNaN(x) {
		return math.MaxInt64 / 2
	}
	return int64(math.Round(x))
}

// extrapolate extends counts of sizes 1..len(c) to sizes 1..maxSize.
func extrapolate(c []float64, maxSize int) []float64 {
	out := append([]float64(nil), c...)
	if len(out) >= maxSize {
		return out[:maxSize]
	}
	m := len(out)
	if out[m-1] == 0 {
		// No clusters of this size, so none larger either.
		for len(out) < maxSize {
			out = append(out, 0)
		}
		return out
	}
	ratio := func(k int) float64 { return out[k] / out[k-1] }
	r := 1.0
	if m >= 2 {
		r = ratio(m - 1)
	}
	step := 0.0
	shrink := 0.0
	if m >= 3 {
		step = max(r-ratio(m-2), 0)
	}
	if m >= 4 {
		if prev := ratio(m-2) - ratio(m-3); prev > 0 {
			shrink = min(step/prev, 1)
		}
	}
	for len(out) < maxSize {
		step *= shrink
		r += step
		out = append(out, out[len(out)-1]*r)
	}
	return out
}
