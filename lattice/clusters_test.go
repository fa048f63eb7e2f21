package lattice

import (
	"fmt"
	"math"
	"math/bits"
	"math/rand/v2"
	"runtime"
	"slices"
	"testing"
)

// bruteConnected decides connectivity of the site set in mask from the
// bond list alone, with a union-find: independent of the adjacency lists,
// Connected and the enumeration.
func bruteConnected(n int, bonds []Bond, mask uint64) bool {
	if mask == 0 {
		return false
	}
	parent := make([]int, n)
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(i int) int {
		for parent[i] != i {
			parent[i] = parent[parent[i]]
			i = parent[i]
		}
		return i
	}
	for _, b := range bonds {
		if mask>>b.I&1 == 1 && mask>>b.J&1 == 1 {
			parent[find(b.I)] = find(b.J)
		}
	}
	root := -1
	for i := 0; i < n; i++ {
		if mask>>i&1 == 1 {
			if root < 0 {
				root = find(i)
			} else if find(i) != root {
				return false
			}
		}
	}
	return true
}

func maskOf(sites []int) uint64 {
	var m uint64
	for _, s := range sites {
		m |= 1 << s
	}
	return m
}

// collect records the visited sets as masks, failing on a repeat or on
// sites out of ascending order.
func collect(t *testing.T, what string) (map[uint64]bool, func([]int) bool) {
	seen := map[uint64]bool{}
	return seen, func(sites []int) bool {
		if !slices.IsSorted(sites) {
			t.Errorf("%s: sites %v not sorted", what, sites)
		}
		m := maskOf(sites)
		if seen[m] {
			t.Errorf("%s: %v visited twice", what, sites)
		}
		seen[m] = true
		return true
	}
}

// matchBruteForce checks that the visited site sets (collect) are exactly
// the sets the brute force found.
func matchBruteForce(t *testing.T, what string, seen map[uint64]bool, want []uint64) {
	t.Helper()
	for _, m := range want {
		if !seen[m] {
			t.Errorf("%s: set %b missed", what, m)
		}
	}
	if len(seen) != len(want) {
		t.Errorf("%s: %d sets visited, brute force %d", what, len(seen), len(want))
	}
}

// smallLattices are brute-forced over all 2^N site subsets.
var smallLattices = []string{
	"square:3x3", "kagome:2x2", "triangular:3x3", "honeycomb:2x2:periodic",
	"square:3x3:periodic:shells=2", "ladder:5:shells=2", "cubic:2x2x3",
}

func TestEachClusterBruteForce(t *testing.T) {
	for _, spec := range smallLattices {
		l := mustBuild(t, spec)
		n := l.NumSites()
		bonds := l.InteractionBonds()
		const maxSize = 7
		seen, visit := collect(t, spec)
		l.EachCluster(maxSize, visit)
		want := make([]int64, maxSize)
		for m := uint64(1); m < 1<<n; m++ {
			k := bits.OnesCount64(m)
			if k > maxSize || !bruteConnected(n, bonds, m) {
				continue
			}
			want[k-1]++
			if !seen[m] {
				t.Errorf("%s: connected set %b missed", spec, m)
			}
		}
		if got := l.CountClusters(maxSize); !slices.Equal(got, want) {
			t.Errorf("%s: CountClusters %v, brute force %v", spec, got, want)
		}
		if int64(len(seen)) != sum(want) {
			t.Errorf("%s: EachCluster gave %d sets, brute force %d", spec, len(seen), sum(want))
		}
	}
}

func sum(c []int64) int64 {
	var s int64
	for _, x := range c {
		s += x
	}
	return s
}

func TestEachClusterFromAnchor(t *testing.T) {
	l := mustBuild(t, "triangular:3x3")
	total := 0
	for a := 0; a < l.NumSites(); a++ {
		first := true
		l.EachClusterFrom(a, 5, func(sites []int) bool {
			if sites[0] != a {
				t.Errorf("anchor %d: cluster %v has a smaller site", a, sites)
			}
			if first && len(sites) != 1 {
				t.Errorf("anchor %d: first cluster %v is not the anchor alone", a, sites)
			}
			first = false
			total++
			return true
		})
	}
	if want := sum(l.CountClusters(5)); int64(total) != want {
		t.Errorf("anchored enumeration gave %d clusters, CountClusters %d", total, want)
	}
	// Stopping: visit false ends the enumeration at once.
	calls := 0
	done := l.EachClusterFrom(0, 5, func([]int) bool { calls++; return calls < 10 })
	if done || calls != 10 {
		t.Errorf("stopped enumeration: returned %v after %d calls, want false after 10", done, calls)
	}
	if !l.EachClusterFrom(0, 5, func([]int) bool { return true }) {
		t.Error("complete enumeration returned false")
	}
	// The enumeration state is clean after a stop.
	if got, want := sum(l.CountClusters(5)), int64(total); got != want {
		t.Errorf("after a stopped enumeration CountClusters gives %d, want %d", got, want)
	}
}

// Hand-countable graphs (closed forms): a path P_n has n(n+1)/2 connected
// induced subgraphs (its intervals), a cycle C_n has n(n-1) + 1 (n(n-1)
// proper arcs plus the whole cycle), the complete graph K_n has 2^n - 1
// (every non-empty subset).
func TestClosedFormGraphs(t *testing.T) {
	for n := 1; n <= 9; n++ {
		var path, cycle, complete []Bond
		for i := 0; i+1 < n; i++ {
			path = append(path, Bond{i, i + 1})
		}
		cycle = slices.Clone(path)
		if n >= 3 {
			cycle = append(cycle, Bond{0, n - 1})
		}
		for i := 0; i < n; i++ {
			for j := i + 1; j < n; j++ {
				complete = append(complete, Bond{i, j})
			}
		}
		coords := ring(n)
		tests := []struct {
			name  string
			bonds []Bond
			want  int64
		}{
			{"P", path, int64(n * (n + 1) / 2)},
			{"K", complete, int64(1)<<n - 1},
		}
		if n >= 3 {
			tests = append(tests, struct {
				name  string
				bonds []Bond
				want  int64
			}{"C", cycle, int64(n*(n-1) + 1)})
		}
		for _, tt := range tests {
			l, err := FromGraph(coords, tt.bonds, 1)
			if err != nil {
				t.Fatal(err)
			}
			if got := sum(l.CountClusters(n)); got != tt.want {
				t.Errorf("%s_%d: %d connected clusters, want %d", tt.name, n, got, tt.want)
			}
			visited := int64(0)
			l.EachCluster(n, func([]int) bool { visited++; return true })
			if visited != tt.want {
				t.Errorf("%s_%d: EachCluster visited %d, want %d", tt.name, n, visited, tt.want)
			}
		}
	}
}

func ring(n int) [][]float64 {
	c := make([][]float64, n)
	for i := range c {
		a := 2 * math.Pi * float64(i) / float64(n)
		c[i] = []float64{math.Cos(a), math.Sin(a)}
	}
	return c
}

func TestEachConnectedSubclusterBruteForce(t *testing.T) {
	rng := rand.New(rand.NewPCG(1, 2))
	for _, spec := range smallLattices {
		l := mustBuild(t, spec)
		n := l.NumSites()
		bonds := l.InteractionBonds()
		// The whole lattice and a few random clusters of it.
		var clusters [][]int
		all := make([]int, n)
		for i := range all {
			all[i] = i
		}
		clusters = append(clusters, all)
		var pool [][]int
		l.EachCluster(6, func(s []int) bool { pool = append(pool, slices.Clone(s)); return true })
		for k := 0; k < 6; k++ {
			clusters = append(clusters, pool[rng.IntN(len(pool))])
		}
		for _, c := range clusters {
			what := fmt.Sprintf("%s subclusters of %v", spec, c)
			seen, visit := collect(t, what)
			shuffled := slices.Clone(c)
			rng.Shuffle(len(shuffled), func(i, j int) { shuffled[i], shuffled[j] = shuffled[j], shuffled[i] })
			l.EachConnectedSubcluster(shuffled, visit)
			full := maskOf(c)
			var subsets []uint64
			for m := full; m > 0; m = (m - 1) & full {
				if m != full && bruteConnected(n, bonds, m) {
					subsets = append(subsets, m)
				}
			}
			matchBruteForce(t, what, seen, subsets)
		}
	}
}

func TestClustersContainingBruteForce(t *testing.T) {
	for _, spec := range smallLattices {
		l := mustBuild(t, spec)
		n := l.NumSites()
		bonds := l.InteractionBonds()
		// Single sites, a bond, and sets that only larger clusters join.
		supports := [][]int{{0}, {n - 1}, {n / 2}, {0, l.Neighbors(0)[0]}, {0, n - 1}, {1, 4, n - 2}, {}}
		for _, maxSize := range []int{1, 3, 6} {
			for _, sup := range supports {
				what := fmt.Sprintf("%s clusters of <= %d sites containing %v", spec, maxSize, sup)
				seen, visit := collect(t, what)
				l.ClustersContaining(sup, maxSize, visit)
				s := maskOf(sup)
				var sets []uint64
				for m := uint64(1); m < 1<<n; m++ {
					if m&s == s && bits.OnesCount64(m) <= maxSize && bruteConnected(n, bonds, m) {
						sets = append(sets, m)
					}
				}
				matchBruteForce(t, what, seen, sets)
			}
		}
	}
}

// Counts do not depend on the number of workers.
func TestCountClustersDeterministic(t *testing.T) {
	l := mustBuild(t, "kagome:6x6:periodic")
	prev := runtime.GOMAXPROCS(1)
	one := l.CountClusters(7)
	runtime.GOMAXPROCS(4)
	four := l.CountClusters(7)
	runtime.GOMAXPROCS(prev)
	if !slices.Equal(one, four) {
		t.Errorf("counts with 1 and 4 workers differ: %v vs %v", one, four)
	}
	visited := make([]int64, 7)
	l.EachCluster(7, func(s []int) bool { visited[len(s)-1]++; return true })
	if !slices.Equal(one, visited) {
		t.Errorf("CountClusters %v, EachCluster %v", one, visited)
	}
}

func TestEnumerationOrderFixed(t *testing.T) {
	l := mustBuild(t, "square:4x4")
	var a, b [][]int
	l.EachCluster(5, func(s []int) bool { a = append(a, slices.Clone(s)); return true })
	l.EachCluster(5, func(s []int) bool { b = append(b, slices.Clone(s)); return true })
	if !slices.EqualFunc(a, b, slices.Equal) {
		t.Error("two enumerations of square:4x4 differ in order")
	}
}
