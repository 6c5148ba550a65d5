package mesh

import "fmt"

// Parents maps the entities of a refined mesh back to the mesh it was
// refined from.
//
// Vertex is the explicit vertex map: for vertex i of the new mesh,
// Vertex[i] < OldVertices means that it is old vertex Vertex[i], and
// Vertex[i] = OldVertices + e that it is the midpoint of old edge e (it
// bisects that edge). So Vertex[i] is the index of the degree-2 DOF of the
// old mesh whose node the new vertex is (fem.Space numbers P2 DOFs as
// vertices, then edges). Refine and RefineUniform number the old vertices
// first, with their indices unchanged, and the new ones after them; a mesh
// renumbered by Reorder has its parent map composed with the renumbering
// (Compose), and there the old vertices are spread among the new ones.
// Code that carries data to the new mesh goes through Vertex and Triangle,
// never through the index ranges.
type Parents struct {
	Triangle []int32 // per triangle of the new mesh: the old triangle that contains it
	Vertex   []int32 // per vertex of the new mesh: its old index, or OldVertices + the old edge it bisects (at the chord midpoint, or on the edge's curve)
	// Chord lists, in increasing order, the new vertices of curved edges
	// that were left at the chord midpoint instead of the curve (see
	// Refine and MinCurveArea); nil when there were none.
	Chord []int32
	// OldVertices is the number of vertices of the old mesh.
	OldVertices int
}

// vertexMap returns Parents.Vertex for a refinement that keeps the nv old
// vertices and appends the midpoints of the old edges split, in that order.
// A nil split means every edge, in edge order (RefineUniform), given ne.
func vertexMap(nv, ne int, split []int32) []int32 {
	if split == nil {
		v := make([]int32, nv+ne)
		for i := range v {
			v[i] = int32(i)
		}
		return v
	}
	v := make([]int32, nv+len(split))
	for i := range nv {
		v[i] = int32(i)
	}
	for i, e := range split {
		v[nv+i] = int32(nv) + e
	}
	return v
}

// Compose returns the parent map of the mesh that Reorder made from the
// refined mesh of p, with o the renumbering it returned: the new mesh's
// triangle k lies in old triangle p.Triangle[o.Triangle[k]], and its vertex
// i is p.Vertex[o.Vertex[i]]. p is not modified. Compose is linear in the
// size of the mesh; lengths that do not match are an ErrLength error.
func (p *Parents) Compose(o *Order) (*Parents, error) {
	if p == nil || o == nil || len(o.Triangle) != len(p.Triangle) || len(o.Vertex) != len(p.Vertex) {
		return nil, fmt.Errorf("mesh: Parents.Compose: the renumbering does not match the parent map: %w", ErrLength)
	}
	q := &Parents{Triangle: make([]int32, len(p.Triangle)), Vertex: make([]int32, len(p.Vertex)), OldVertices: p.OldVertices}
	for k, t := range o.Triangle {
		if t < 0 || int(t) >= len(p.Triangle) {
			return nil, fmt.Errorf("mesh: Parents.Compose: triangle %d renumbered from %d: %w", k, t, ErrIndex)
		}
		q.Triangle[k] = p.Triangle[t]
	}
	for i, v := range o.Vertex {
		if v < 0 || int(v) >= len(p.Vertex) {
			return nil, fmt.Errorf("mesh: Parents.Compose: vertex %d renumbered from %d: %w", i, v, ErrIndex)
		}
		q.Vertex[i] = p.Vertex[v]
	}
	if len(p.Chord) > 0 {
		// The vertices left on a chord, in the new numbering, increasing.
		on := make(map[int32]bool, len(p.Chord))
		for _, c := range p.Chord {
			on[c] = true
		}
		for i, v := range o.Vertex {
			if on[v] {
				q.Chord = append(q.Chord, int32(i))
			}
		}
	}
	return q, nil
}
