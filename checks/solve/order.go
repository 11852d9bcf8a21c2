package solve

import "container/heap"

// minimumDegree returns a fill-reducing elimination order of the n
// unknowns of a matrix with entries (ei[e], ej[e]): the minimum-degree
// rule on the graph of A + Aᵀ (Tinney & Walker 1967, scheme 2), with the
// elimination graph kept explicitly. At each step the unknown with the
// fewest neighbours (the lowest index among equals, so the order is
// deterministic) is eliminated and its neighbours are joined into a
// clique. A set of edges keeps the work per new edge constant, so an
// unknown joined to many others (a supply net) costs nothing until it is
// eliminated, which the rule puts near the end.
func minimumDegree(n int, ei, ej []int32) []int {
	adj := make([][]int32, n)
	deg := make([]int, n)
	edges := make(map[uint64]struct{}, 2*len(ei))
	link := func(a, b int32) {
		if a == b {
			return
		}
		if a > b {
			a, b = b, a
		}
		k := uint64(a)<<32 | uint64(b)
		if _, ok := edges[k]; ok {
			return
		}
		edges[k] = struct{}{}
		adj[a] = append(adj[a], b)
		adj[b] = append(adj[b], a)
		deg[a]++
		deg[b]++
	}
	for e := range ei {
		link(ei[e], ej[e])
	}
	done := make([]bool, n)
	h := make(degHeap, 0, n)
	for i := 0; i < n; i++ {
		h = append(h, degItem{deg[i], int32(i)})
	}
	heap.Init(&h)
	order := make([]int, 0, n)
	var nb []int32
	for len(order) < n && h.Len() > 0 {
		it := heap.Pop(&h).(degItem)
		v := it.v
		if done[v] || it.d != deg[v] {
			continue // a stale entry
		}
		done[v] = true
		order = append(order, int(v))
		nb = nb[:0]
		for _, u := range adj[v] {
			if !done[u] {
				nb = append(nb, u)
			}
		}
		adj[v] = nil
		for _, u := range nb {
			deg[u]--
		}
		for a := 0; a < len(nb); a++ {
			for b := a + 1; b < len(nb); b++ {
				link(nb[a], nb[b])
			}
		}
		for _, u := range nb {
			heap.Push(&h, degItem{deg[u], u})
		}
	}
	return order
}

// degItem is an unknown and its degree when pushed.
type degItem struct {
	d int
	v int32
}

// degHeap is a min-heap of degItems by degree, then index.
type degHeap []degItem

func (h degHeap) Len() int { return len(h) }
func (h degHeap) Less(i, j int) bool {
	if h[i].d != h[j].d {
		return h[i].d < h[j].d
	}
	return h[i].v < h[j].v
}
func (h degHeap) Swap(i, j int) { h[i], h[j] = h[j], h[i] }
func (h *degHeap) Push(x any)   { *h = append(*h, x.(degItem)) }
func (h *degHeap) Pop() any {
	old := *h
	it := old[len(old)-1]
	*h = old[:len(old)-1]
	return it
}
