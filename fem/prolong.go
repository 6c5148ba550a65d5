package fem

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/mesh"
)

// Prolong carries u to the space s on a mesh refined from u's mesh, by
// interpolation: each DOF of s takes the value at its node of the
// polynomial of u on the node's parent triangle (p.Triangle of a new
// triangle that holds the node). The DOFs at old vertices keep their
// values. On straight edges the refinement only subdivides the triangles,
// so a function of u's space is carried exactly (to rounding).
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
	if p == nil || len(p.Triangle) != m.NumTriangles() || p.OldVertices != old.NumVertices() || m.NumVertices() != p.OldVertices+len(p.Edge) {
		return nil, fmt.Errorf("fem: Prolong: parent map does not match the meshes: %w", ErrArgument)
	}
	if s.Degree != u.Space.Degree {
		return nil, fmt.Errorf("fem: Prolong: degree %d to degree %d: %w", u.Space.Degree, s.Degree, ErrDegree)
	}
	v := NewFunction(s)
	done := make([]bool, s.NumDOF())
	ev := NewEvaluator(u)
	var dofs [6]int32
	for k := range m.NumTriangles() {
		parent := int(p.Triangle[k])
		if parent < 0 || parent >= old.NumTriangles() {
			return nil, fmt.Errorf("fem: Prolong: triangle %d has parent %d: %w", k, parent, ErrArgument)
		}
		loaded := false
		for _, d := range s.ElementDOFs(dofs[:0], k) {
			if done[d] {
				continue
			}
			done[d] = true
			if int(d) < p.OldVertices {
				v.U[d] = u.U[d] // old vertices keep their index and value
				continue
			}
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
