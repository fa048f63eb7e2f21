package lattice

// The enumeration of connected induced subgraphs follows Wernicke's ESU
// algorithm (S. Wernicke, "Efficient detection of network motifs",
// IEEE/ACM TCBB 3, 347 (2006)). Starting from a connected seed set S, a
// search node holds a connected set V ⊇ S and an extension list of
// candidate sites. A child takes one candidate w off the list and extends
// the list with w's exclusive neighbours: those outside V and not
// adjacent to V. Every connected set containing S (restricted to sites
// above a lower bound) is reached exactly once: w is the candidate whose
// removal order is fixed by the parent, and a site enters a list only
// through the first member of V it touches. With S a single site v and
// the bound v, this yields each connected set whose smallest site is v
// exactly once, in time proportional to the number of sets times their
// size and degree, without ever building a disconnected set.

// enumerator holds the scratch state of one enumeration over a graph in
// compressed adjacency form. It is not safe for concurrent use.
type enumerator struct {
	start []int32 // neighbours of v are nbr[start[v]:start[v+1]]
	nbr   []int32

	// touch[u] counts the members of V whose closed neighbourhood holds
	// u; u is in V or adjacent to it exactly when touch[u] > 0.
	touch []int32
	sub   []int     // V, sorted ascending
	ext   [][]int32 // extension list of each depth, reused

	max   int
	lo    int32 // only sites above lo may join
	visit func([]int) bool
	// count, used when visit is nil, accumulates counts[n-1] for each
	// set of n sites.
	counts []int64
	// prune, when set, is asked after each extension whether no superset
	// of V can be wanted, so that the subtree is skipped (V itself is
	// still reported). It is not consulted for sets of the maximal size.
	prune func() bool
}

func newEnumerator(start, nbr []int32) *enumerator {
	return &enumerator{start: start, nbr: nbr, touch: make([]int32, len(start)-1)}
}

// reset prepares an enumeration of sets of up to maxSize sites above lo,
// reported to visit or, when visit is nil, counted into counts.
func (e *enumerator) reset(maxSize int, lo int32, visit func([]int) bool, counts []int64) {
	e.max, e.lo, e.visit, e.counts, e.prune = maxSize, lo, visit, counts, nil
	for len(e.ext) < maxSize+1 {
		e.ext = append(e.ext, nil)
	}
	e.sub = e.sub[:0]
}

func (e *enumerator) neighbours(v int) []int32 { return e.nbr[e.start[v]:e.start[v+1]] }

// add puts w into V, marking its closed neighbourhood.
func (e *enumerator) add(w int) {
	e.touch[w]++
	for _, u := range e.neighbours(w) {
		e.touch[u]++
	}
	e.insert(w)
}

// remove takes w out of V, unmarking its closed neighbourhood.
func (e *enumerator) remove(w int) {
	e.touch[w]--
	for _, u := range e.neighbours(w) {
		e.touch[u]--
	}
	e.delete(w)
}

// insert puts w into the sorted set.
func (e *enumerator) insert(w int) {
	s := append(e.sub, 0)
	k := len(s) - 1
	for k > 0 && s[k-1] > w {
		s[k] = s[k-1]
		k--
	}
	s[k] = w
	e.sub = s
}

// delete takes w out of the sorted set.
func (e *enumerator) delete(w int) {
	s := e.sub
	k := len(s) - 1
	for s[k] != w {
		k--
	}
	copy(s[k:], s[k+1:])
	e.sub = s[:len(s)-1]
}

// report hands the current set to visit or counts it.
func (e *enumerator) report() bool {
	if e.visit == nil {
		e.counts[len(e.sub)-1]++
		return true
	}
	return e.visit(e.sub)
}

// run enumerates the connected sets containing the connected seed set
// (sites above e.lo, seed included whatever lo is). It returns false if
// visit stopped it. touch is all zero before and after.
func (e *enumerator) run(seed []int) bool {
	if len(seed) == 0 || len(seed) > e.max {
		return true
	}
	for _, s := range seed {
		e.add(s)
	}
	ext := e.ext[0][:0]
	for _, s := range seed {
		for _, u := range e.neighbours(s) {
			if u > e.lo && !e.inSub(int(u)) && !contains32(ext, u) {
				ext = append(ext, u)
			}
		}
	}
	e.ext[0] = ext
	ok := true
	if e.prune == nil || len(seed) == e.max || !e.prune() {
		ok = e.report() && e.extend(1, ext)
	} else {
		ok = e.report()
	}
	for _, s := range seed {
		e.remove(s)
	}
	return ok
}

func (e *enumerator) inSub(v int) bool {
	for _, s := range e.sub {
		if s == v {
			return true
		}
	}
	return false
}

func contains32(list []int32, v int32) bool {
	for _, x := range list {
		if x == v {
			return true
		}
	}
	return false
}

// extend explores the children of the current set V with extension list
// ext; depth indexes the scratch list the children use.
func (e *enumerator) extend(depth int, ext []int32) bool {
	if len(e.sub) >= e.max {
		return true
	}
	if len(e.sub)+1 == e.max {
		// Every candidate gives one set of the maximal size and no
		// children: count them at once, or report them without
		// building extension lists.
		if e.visit == nil {
			e.counts[e.max-1] += int64(len(ext))
			return true
		}
		// No extension lists follow, so the sets need no touch marks.
		for k := len(ext) - 1; k >= 0; k-- {
			w := int(ext[k])
			e.insert(w)
			ok := e.visit(e.sub)
			e.delete(w)
			if !ok {
				return false
			}
		}
		return true
	}
	for len(ext) > 0 {
		w := int(ext[len(ext)-1])
		ext = ext[:len(ext)-1]
		next := append(e.ext[depth][:0], ext...)
		for _, u := range e.neighbours(w) {
			if e.touch[u] == 0 && u > e.lo {
				next = append(next, u)
			}
		}
		e.ext[depth] = next
		e.add(w)
		ok := e.report()
		if ok && (e.prune == nil || !e.prune()) {
			ok = e.extend(depth+1, next)
		}
		e.remove(w)
		if !ok {
			return false
		}
	}
	return true
}
