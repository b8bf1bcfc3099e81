package plan

import (
	"sort"

	"bitsift/model"
)

// ChainBound is an upper bound on the joint entropy of the fields idx (bits
// per record): Σ H(F) minus the mutual information along a spanning forest
// of greatest total I(F;G) over the measured pairs (see the package
// comment). Each field is conditioned only on its parent in the forest,
// and a parent comes before its children in some order, so the chain rule
// makes this a bound; unmeasured fields count their whole entropy.
func ChainBound(s *model.Snapshot, idx []int) float64 {
	type edge struct {
		a, b int
		w    float64
	}
	var edges []edge
	sum := 0.0
	for x, i := range idx {
		sum += s.Fields[i].Entropy
		for _, j := range idx[x+1:] {
			if s.HasPair(i, j) {
				if w := s.Mutual(i, j); w > 0 {
					edges = append(edges, edge{x, indexOf(idx, j), w})
				}
			}
		}
	}
	// Kruskal: heaviest edges first, skipping those that close a cycle.
	sort.Slice(edges, func(a, b int) bool { return edges[a].w > edges[b].w })
	parent := make([]int, len(idx))
	for i := range parent {
		parent[i] = i
	}
	var find func(int) int
	find = func(x int) int {
		for parent[x] != x {
			parent[x] = parent[parent[x]]
			x = parent[x]
		}
		return x
	}
	for _, e := range edges {
		ra, rb := find(e.a), find(e.b)
		if ra != rb {
			parent[ra] = rb
			sum -= e.w
		}
	}
	return max(sum, 0)
}

func indexOf(idx []int, v int) int {
	for i, x := range idx {
		if x == v {
			return i
		}
	}
	return -1
}
