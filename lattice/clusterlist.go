package lattice

import (
	"fmt"
	"runtime"

	"golang.org/x/sync/errgroup"
)

// ClusterList stores connected clusters compactly: the sites of all
// clusters in one arena of 32-bit indices, cluster k occupying
// sites[start[k]:start[k+1]], sorted ascending. Clusters appear in the
// order of EachCluster. It costs 4 bytes per site plus 8 per cluster.
type ClusterList struct {
	maxSize int
	sites   []int32
	start   []int64
}

// Len returns the number of clusters.
func (c *ClusterList) Len() int { return len(c.start) - 1 }

// MaxSize returns the size bound the list was built with.
func (c *ClusterList) MaxSize() int { return c.maxSize }

// Size returns the number of sites of cluster k.
func (c *ClusterList) Size(k int) int { return int(c.start[k+1] - c.start[k]) }

// Sites returns the sites of cluster k, sorted ascending. The slice
// shares the list's storage: do not modify it.
func (c *ClusterList) Sites(k int) []int32 { return c.sites[c.start[k]:c.start[k+1]:c.start[k+1]] }

// AppendSites appends the sites of cluster k to dst as ints.
func (c *ClusterList) AppendSites(dst []int, k int) []int {
	for _, s := range c.Sites(k) {
		dst = append(dst, int(s))
	}
	return dst
}

// CountBySize returns counts[n-1], the number of clusters of n sites.
func (c *ClusterList) CountBySize() []int64 {
	counts := make([]int64, c.maxSize)
	for k := 0; k < c.Len(); k++ {
		counts[c.Size(k)-1]++
	}
	return counts
}

// Bytes returns the memory the list occupies.
func (c *ClusterList) Bytes() int64 { return 4*int64(cap(c.sites)) + 8*int64(cap(c.start)) }

// BuildClusters enumerates every connected cluster of at most maxSize
// sites into a ClusterList. Before any work it estimates the count
// (EstimateClusters) and refuses, with an error giving the estimated
// count and memory, when the estimate exceeds limit clusters; limit <= 0
// means no limit. It then counts exactly per block of anchors, places
// each block in the arena and fills the blocks in parallel, so the
// arena is allocated once and the order is that of EachCluster.
func (l *Lattice) BuildClusters(maxSize int, limit int64) (*ClusterList, error) {
	if maxSize < 1 {
		return nil, fmt.Errorf("cluster size bound %d must be at least 1", maxSize)
	}
	if limit > 0 {
		if count, bytes := l.EstimateClusters(maxSize); count > limit {
			return nil, fmt.Errorf("%s has about %d connected clusters of up to %d sites (about %s), more than the limit of %d",
				l.Spec, count, maxSize, formatBytes(bytes), limit)
		}
	}
	perBlock := l.countBlocks(maxSize)
	clusterAt := make([]int64, len(perBlock)+1) // first cluster of each block
	siteAt := make([]int64, len(perBlock)+1)    // first arena slot of each block
	for b, counts := range perBlock {
		clusterAt[b+1], siteAt[b+1] = clusterAt[b], siteAt[b]
		for k, n := range counts {
			clusterAt[b+1] += n
			siteAt[b+1] += n * int64(k+1)
		}
	}
	total := clusterAt[len(perBlock)]
	if limit > 0 && total > limit {
		return nil, fmt.Errorf("%s has %d connected clusters of up to %d sites (%s), more than the limit of %d",
			l.Spec, total, maxSize, formatBytes(4*siteAt[len(perBlock)]+8*total), limit)
	}
	list := &ClusterList{
		maxSize: maxSize,
		sites:   make([]int32, siteAt[len(perBlock)]),
		start:   make([]int64, total+1),
	}
	list.start[total] = siteAt[len(perBlock)]
	blocks := l.AnchorBlocks()
	var g errgroup.Group
	g.SetLimit(runtime.GOMAXPROCS(0))
	for b, blk := range blocks {
		g.Go(func() error {
			k, pos := clusterAt[b], siteAt[b]
			e := l.getEnumerator()
			defer l.putEnumerator(e)
			seed := []int{0}
			for a := blk[0]; a < blk[1]; a++ {
				e.reset(maxSize, int32(a), func(sites []int) bool {
					list.start[k] = pos
					for _, s := range sites {
						list.sites[pos] = int32(s)
						pos++
					}
					k++
					return true
				}, nil)
				seed[0] = a
				e.run(seed)
			}
			if k != clusterAt[b+1] {
				panic("lattice: cluster count changed between passes")
			}
			return nil
		})
	}
	g.Wait()
	return list, nil
}

// formatBytes writes a byte count with a binary unit.
func formatBytes(n int64) string {
	const unit = 1024
	if n < unit {
		return fmt.Sprintf("%d B", n)
	}
	v := float64(n)
	for _, u := range []string{"KiB", "MiB", "GiB", "TiB"} {
		v /= unit
		if v < unit {
			return fmt.Sprintf("%.1f %s", v, u)
		}
	}
	return fmt.Sprintf("%.1f PiB", v/unit)
}
