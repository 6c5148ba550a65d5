package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/mesh"
)

// Prolong carries u to the space s on a mesh refined from u's mesh, by
// interpolation: a DOF at an old vertex keeps its value (through
// p.Vertex), every other DOF takes the value of u at its node, evaluated
// in the parent triangle that contains it; where several do (a node on an
// old edge), in the one of lowest old index. A function of u's space is
// carried exactly (to rounding), since refinement only subdivides its
// triangles. The result does not depend on how the new mesh is numbered:
// after a renumbering (mesh.Reorder, with p composed by
// mesh.Parents.Compose) it is the same values, permuted, bit for bit.
//
// Where the refinement put a new vertex on a curve (mesh.Refine), the new
// triangles at it are not inside their parent: the vertex, and the P2
// nodes on the new edges at it, may lie outside the parent triangle, and
// Prolong evaluates the parent's polynomial there (its barycentric
// coordinates may be negative: an extrapolation by the same polynomial).
// So a polynomial of u's degree is still carried exactly, and u's values
// at the old vertices are kept.
//
// p is the parent map returned by the refinement. Prolong is linear in the
// size of s.
func (u *Function) Prolong(s *Space, p *mesh.Parents) (*Function, error) {
	old := u.Space.Mesh
	m := s.Mesh
	if p == nil || len(p.Triangle) != m.NumTriangles() || p.OldVertices != old.NumVertices() || len(p.Vertex) != m.NumVertices() {
		return nil, fmt.Errorf("fem: Prolong: parent map does not match the meshes: %w", ErrArgument)
	}
	if s.Degree != u.Space.Degree {
		return nil, fmt.Errorf("fem: Prolong: degree %d to degree %d: %w", u.Space.Degree, s.Degree, ErrDegree)
	}
	v := NewFunction(s)
	// from[d]: the lowest parent of the triangles at DOF d, so that the
	// value does not depend on the order of the new triangles; -1 once
	// the DOF is done.
	from := make([]int32, s.NumDOF())
	for d := range from {
		from[d] = math.MaxInt32
	}
	var dofs [6]int32
	for k := range m.NumTriangles() {
		parent := p.Triangle[k]
		if parent < 0 || int(parent) >= old.NumTriangles() {
			return nil, fmt.Errorf("fem: Prolong: triangle %d has parent %d: %w", k, parent, ErrArgument)
		}
		for _, d := range s.ElementDOFs(dofs[:0], k) {
			from[d] = min(from[d], parent)
		}
	}
	for i, w := range p.Vertex {
		if w < 0 || int(w) >= old.NumVertices()+old.NumEdges() {
			return nil, fmt.Errorf("fem: Prolong: vertex %d has parent %d: %w", i, w, ErrArgument)
		}
		if int(w) < p.OldVertices {
			v.U[i] = u.U[w] // an old vertex keeps its value
			from[i] = -1
		}
	}
	ev := NewEvaluator(u)
	for k := range m.NumTriangles() {
		parent := int(p.Triangle[k])
		loaded := false
		for _, d := range s.ElementDOFs(dofs[:0], k) {
			if from[d] != int32(parent) {
				continue
			}
			from[d] = -1
			if !loaded {
				ev.Load(parent)
				loaded = true
			}
			x, y := s.DOFPoint(int(d))
			val, _, _ := ev.Eval(old.Barycentric(parent, x, y))
			v.U[d] = val
		}
	}
	return v, nil
}
