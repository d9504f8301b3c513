package concepts

import "slices"

// Hierarchy queries follow Concept.Broader. Every query is safe on a
// hierarchy with cycles (which Check reports): a concept is never visited
// twice in one walk.

// MaxPaths bounds PathsToTop: a deep poly-hierarchy can have exponentially
// many paths.
const MaxPaths = 4096

// maxPathSteps bounds the work of one PathsToTop call: a dense tangle of
// broader cycles can hold exponentially many simple paths that reach no root.
const maxPathSteps = 1 << 18

// computeDepth returns the longest broader chain from each concept to one
// with no broader (0 for such a root). Inside a cycle the edge that closes
// it is ignored, so results stay finite.
func (s *Scheme) computeDepth() []int32 {
	n := len(s.Concepts)
	depth := make([]int32, n)
	state := make([]uint8, n) // 0 new, 1 on the walk, 2 done
	type frame struct{ c, next int }
	var stack []frame
	for root := range s.Concepts {
		if state[root] != 0 {
			continue
		}
		stack = append(stack[:0], frame{root, 0})
		state[root] = 1
		for len(stack) > 0 {
			f := &stack[len(stack)-1]
			bs := s.Concepts[f.c].Broader
			if f.next < len(bs) {
				p := bs[f.next]
				f.next++
				if p < 0 || p >= n {
					continue
				}
				switch state[p] {
				case 0:
					state[p] = 1
					stack = append(stack, frame{p, 0})
				case 2:
					if d := depth[p] + 1; d > depth[f.c] {
						depth[f.c] = d
					}
				}
				continue
			}
			state[f.c] = 2
			c := f.c
			stack = stack[:len(stack)-1]
			if len(stack) > 0 {
				parent := stack[len(stack)-1].c
				if d := depth[c] + 1; d > depth[parent] {
					depth[parent] = d
				}
			}
		}
	}
	return depth
}

func (s *Scheme) ensure() {
	if s.index == nil || len(s.depth) != len(s.Concepts) || len(s.reachesRoot) != len(s.Concepts) {
		s.Reindex()
	}
}

// Depth returns the length of the longest broader chain from concept i up
// to a concept with no broader (0 for such a root, e.g. a top concept).
func (s *Scheme) Depth(i int) int {
	s.ensure()
	return int(s.depth[i])
}

// MaxDepth returns the largest Depth over all concepts.
func (s *Scheme) MaxDepth() int {
	s.ensure()
	m := int32(0)
	for _, d := range s.depth {
		m = max(m, d)
	}
	return int(m)
}

// Ancestors returns every concept reachable from i through broader links,
// sorted by index; i itself only when it lies on a cycle.
func (s *Scheme) Ancestors(i int) []int {
	return s.walk(i, func(c *Concept) []int { return c.Broader })
}

// Descendants returns every concept reachable from i through narrower
// links, sorted by index.
func (s *Scheme) Descendants(i int) []int {
	return s.walk(i, func(c *Concept) []int { return c.Narrower })
}

func (s *Scheme) walk(i int, next func(*Concept) []int) []int {
	seen := map[int]bool{}
	queue := []int{i}
	var out []int
	for len(queue) > 0 {
		c := queue[0]
		queue = queue[1:]
		for _, p := range next(&s.Concepts[c]) {
			if !seen[p] {
				seen[p] = true
				out = append(out, p)
				queue = append(queue, p)
			}
		}
	}
	slices.Sort(out)
	return out
}

// PathsToTop returns every broader path from a root (a concept with no
// broader) down to i, root first and i last, shortest first then by
// indices. A path never repeats a concept, so a cycle ends the paths that
// enter it. It returns at most MaxPaths paths, and on a dense tangle of
// cycles it stops searching after a fixed amount of work (a few hundred
// thousand steps), so the list may then be incomplete but the call ends.
func (s *Scheme) PathsToTop(i int) [][]int {
	s.ensure()
	var out [][]int
	path := []int{i}
	on := map[int]bool{i: true}
	steps := 0
	var up func(c int)
	up = func(c int) {
		bs := s.Concepts[c].Broader
		if len(bs) == 0 {
			if len(out) < MaxPaths {
				p := slices.Clone(path)
				slices.Reverse(p)
				out = append(out, p)
			}
			return
		}
		// Roots first, so that a path one step away is never lost to the
		// step budget spent on a tangle of cycles.
		for _, p := range bs {
			if len(s.Concepts[p].Broader) == 0 && !on[p] {
				path = append(path, p)
				up(p)
				path = path[:len(path)-1]
			}
		}
		for _, p := range bs {
			// Skip roots (done), concepts on the path (a cycle) and those
			// from which no root can be reached at all.
			if len(s.Concepts[p].Broader) == 0 || on[p] || !s.reachesRoot[p] || len(out) >= MaxPaths || steps >= maxPathSteps {
				continue
			}
			steps++
			on[p] = true
			path = append(path, p)
			up(p)
			path = path[:len(path)-1]
			delete(on, p)
		}
	}
	up(i)
	slices.SortStableFunc(out, func(a, b []int) int {
		if len(a) != len(b) {
			return len(a) - len(b)
		}
		return slices.Compare(a, b)
	})
	return out
}

// computeReachesRoot marks the concepts from which some broader chain
// ends at a concept with no broader: a walk down Narrower from the roots.
func (s *Scheme) computeReachesRoot() []bool {
	reach := make([]bool, len(s.Concepts))
	var queue []int
	for i := range s.Concepts {
		if len(s.Concepts[i].Broader) == 0 {
			reach[i] = true
			queue = append(queue, i)
		}
	}
	for len(queue) > 0 {
		c := queue[len(queue)-1]
		queue = queue[:len(queue)-1]
		for _, n := range s.Concepts[c].Narrower {
			if n >= 0 && n < len(reach) && !reach[n] {
				reach[n] = true
				queue = append(queue, n)
			}
		}
	}
	return reach
}

// TopConcepts returns the concepts marked as top concepts of the scheme;
// when none is marked, the roots (concepts with no broader).
func (s *Scheme) TopConcepts() []int {
	var out []int
	for i := range s.Concepts {
		if s.Concepts[i].Top {
			out = append(out, i)
		}
	}
	if len(out) == 0 {
		return s.Roots()
	}
	return out
}

// Roots returns the concepts with no broader concept.
func (s *Scheme) Roots() []int {
	var out []int
	for i := range s.Concepts {
		if len(s.Concepts[i].Broader) == 0 {
			out = append(out, i)
		}
	}
	return out
}

// Cycles returns one broader cycle per strongly connected part of the
// hierarchy that has one, as concept indices [a, b, ..., a] where each
// is broader of the one before; nil for a DAG. Use it to reject a
// vocabulary whose hierarchy is not a DAG.
func (s *Scheme) Cycles() [][]int {
	n := len(s.Concepts)
	// Tarjan's strongly connected components, iterative.
	index := make([]int32, n)
	low := make([]int32, n)
	onStack := make([]bool, n)
	for i := range index {
		index[i] = -1
	}
	var stack []int
	var comps [][]int
	next := int32(0)
	type frame struct{ c, e int }
	var call []frame
	for root := 0; root < n; root++ {
		if index[root] >= 0 {
			continue
		}
		call = append(call[:0], frame{root, 0})
		index[root], low[root] = next, next
		next++
		stack = append(stack, root)
		onStack[root] = true
		for len(call) > 0 {
			f := &call[len(call)-1]
			bs := s.Concepts[f.c].Broader
			if f.e < len(bs) {
				p := bs[f.e]
				f.e++
				if index[p] < 0 {
					index[p], low[p] = next, next
					next++
					stack = append(stack, p)
					onStack[p] = true
					call = append(call, frame{p, 0})
				} else if onStack[p] {
					low[f.c] = min(low[f.c], index[p])
				}
				continue
			}
			c := f.c
			call = call[:len(call)-1]
			if len(call) > 0 {
				parent := call[len(call)-1].c
				low[parent] = min(low[parent], low[c])
			}
			if low[c] == index[c] {
				var comp []int
				for {
					x := stack[len(stack)-1]
					stack = stack[:len(stack)-1]
					onStack[x] = false
					comp = append(comp, x)
					if x == c {
						break
					}
				}
				if len(comp) > 1 || slices.Contains(s.Concepts[c].Broader, c) {
					comps = append(comps, comp)
				}
			}
		}
	}
	var out [][]int
	for _, comp := range comps {
		out = append(out, s.cycleIn(comp))
	}
	slices.SortFunc(out, func(a, b []int) int { return a[0] - b[0] })
	return out
}

// cycleIn finds a shortest broader cycle through the smallest concept of a
// strongly connected component (breadth-first inside the component).
func (s *Scheme) cycleIn(comp []int) []int {
	in := map[int]bool{}
	start := comp[0]
	for _, c := range comp {
		in[c] = true
		start = min(start, c)
	}
	prev := map[int]int{}
	queue := []int{start}
	for len(queue) > 0 {
		c := queue[0]
		queue = queue[1:]
		for _, p := range s.Concepts[c].Broader {
			if !in[p] {
				continue
			}
			if p == start {
				path := []int{start}
				for x := c; x != start; x = prev[x] {
					path = append(path, x)
				}
				slices.Reverse(path[1:])
				return append(path, start)
			}
			if _, ok := prev[p]; !ok {
				prev[p] = c
				queue = append(queue, p)
			}
		}
	}
	return []int{start, start}
}
