package fem

import (
	"fmt"
	"slices"
	"sync"

	"github.com/posteriori-fem/posteriori/mesh"
)

// Space is the Lagrange finite element space of degree 1 or 2 on a mesh,
// with the continuous piecewise polynomials of that degree as functions.
//
// DOF numbering: DOF i < NumVertices is the value at vertex i; for degree 2,
// DOF NumVertices+e is the value at the midpoint of edge e. On triangle k
// the local DOFs are its vertices Tri[3k], Tri[3k+1], Tri[3k+2], then, for
// degree 2, the midpoints of the edges opposite them, TriEdge[3k+i].
type Space struct {
	Mesh   *mesh.Mesh
	Degree int

	locOnce sync.Once
	loc     *mesh.Locator
}

// NewSpace returns the Lagrange space of the given degree (1 or 2) on m.
func NewSpace(m *mesh.Mesh, degree int) (*Space, error) {
	if m == nil {
		return nil, fmt.Errorf("fem: NewSpace: nil mesh: %w", ErrArgument)
	}
	if degree != 1 && degree != 2 {
		return nil, fmt.Errorf("fem: NewSpace: degree %d: %w", degree, ErrDegree)
	}
	return &Space{Mesh: m, Degree: degree}, nil
}

// NumDOF returns the dimension of the space, Dirichlet nodes included.
func (s *Space) NumDOF() int {
	if s.Degree == 2 {
		return s.Mesh.NumVertices() + s.Mesh.NumEdges()
	}
	return s.Mesh.NumVertices()
}

// LocalDOFs returns the number of DOFs on one triangle: 3 or 6.
func (s *Space) LocalDOFs() int { return 3 * s.Degree }

// ElementDOFs appends the DOFs of triangle k to dst[:0] in local order and
// returns it.
func (s *Space) ElementDOFs(dst []int32, k int) []int32 {
	m := s.Mesh
	dst = append(dst[:0], m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2])
	if s.Degree == 2 {
		nv := int32(m.NumVertices())
		dst = append(dst, nv+m.TriEdge[3*k], nv+m.TriEdge[3*k+1], nv+m.TriEdge[3*k+2])
	}
	return dst
}

// DOFPoint returns the node of DOF i: a vertex or an edge midpoint.
func (s *Space) DOFPoint(i int) (x, y float64) {
	m := s.Mesh
	nv := m.NumVertices()
	if i < nv {
		return m.Vertex(i)
	}
	e := i - nv
	ax, ay := m.Vertex(int(m.Edge[2*e]))
	bx, by := m.Vertex(int(m.Edge[2*e+1]))
	return 0.5 * (ax + bx), 0.5 * (ay + by)
}

// BoundaryDOFs returns, in ascending order, the DOFs that lie on boundary
// edges carrying one of the given tags (the end vertices, and for degree 2
// the midpoint).
func (s *Space) BoundaryDOFs(tags ...int32) []int32 {
	m := s.Mesh
	nv := int32(m.NumVertices())
	mark := make([]bool, s.NumDOF())
	for _, e := range boundaryEdges(m) {
		if !slices.Contains(tags, m.EdgeTag[e]) {
			continue
		}
		mark[m.Edge[2*e]] = true
		mark[m.Edge[2*e+1]] = true
		if s.Degree == 2 {
			mark[nv+int32(e)] = true
		}
	}
	var d []int32
	for i, b := range mark {
		if b {
			d = append(d, int32(i))
		}
	}
	return d
}

// locator returns the point locator of the mesh, built on first use.
func (s *Space) locator() *mesh.Locator {
	s.locOnce.Do(func() { s.loc = mesh.NewLocator(s.Mesh) })
	return s.loc
}
