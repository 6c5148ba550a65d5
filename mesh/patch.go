package mesh

// VertexTriangles returns the triangles around each vertex in compressed
// form: the triangles that contain vertex v are tri[start[v]:start[v+1]],
// in ascending order. It is linear in the size of the mesh.
func (m *Mesh) VertexTriangles() (start, tri []int32) {
	return m.VertexTrianglesTo(nil, nil)
}

// VertexTrianglesTo is VertexTriangles writing into start and tri, which
// it resizes to NumVertices()+1 and 3 NumTriangles(), reusing their
// storage where it has room, and returns; it allocates nothing when both
// have room.
func (m *Mesh) VertexTrianglesTo(start, tri []int32) ([]int32, []int32) {
	nv, nt := m.NumVertices(), m.NumTriangles()
	if cap(start) < nv+2 {
		start = make([]int32, nv+2)
	}
	start = start[:nv+2]
	clear(start)
	// Counts at v+2, offsets at v+1 after the prefix sums, and start[v+1]
	// advanced past the triangles of v by the fill, which leaves the
	// offsets at v.
	for _, v := range m.Tri {
		start[v+2]++
	}
	for v := range nv {
		start[v+2] += start[v+1]
	}
	if cap(tri) < 3*nt {
		tri = make([]int32, 3*nt)
	}
	tri = tri[:3*nt]
	for k := range nt {
		for _, v := range m.Tri[3*k : 3*k+3] {
			tri[start[v+1]] = int32(k)
			start[v+1]++
		}
	}
	return start[:nv+1], tri
}

// BoundaryVertices reports, for each vertex, whether it lies on a boundary
// edge.
func (m *Mesh) BoundaryVertices() []bool {
	b := make([]bool, m.NumVertices())
	for e := range m.NumEdges() {
		if m.IsBoundary(e) {
			b[m.Edge[2*e]] = true
			b[m.Edge[2*e+1]] = true
		}
	}
	return b
}

// NumPieces returns the number of connected pieces of the mesh (see
// Components). It is known without cost for meshes built by New and by
// refinement, which keeps the pieces.
func (m *Mesh) NumPieces() int {
	if m.pieces == 0 { // a Mesh not made by this package: count (without caching, so that readers do not race)
		_, n := m.Components()
		return n
	}
	return m.pieces
}

// Components labels the connected pieces of the mesh (triangles joined
// through shared edges): label[k] is the piece of triangle k, numbered from
// 0 in order of each piece's lowest triangle, and n is their number. It is
// linear in the size of the mesh.
func (m *Mesh) Components() (label []int32, n int) {
	nt := m.NumTriangles()
	label = make([]int32, nt)
	for k := range label {
		label[k] = -1
	}
	var stack []int32
	for k := range nt {
		if label[k] >= 0 {
			continue
		}
		label[k] = int32(n)
		stack = append(stack[:0], int32(k))
		for len(stack) > 0 {
			t := stack[len(stack)-1]
			stack = stack[:len(stack)-1]
			for _, e := range m.TriEdge[3*t : 3*t+3] {
				for _, o := range m.EdgeTri[2*e : 2*e+2] {
					if o >= 0 && label[o] < 0 {
						label[o] = int32(n)
						stack = append(stack, o)
					}
				}
			}
		}
		n++
	}
	return label, n
}
