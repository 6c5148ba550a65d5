package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// edgeShape fills phi with the traces of the local basis functions on an
// edge from vertex a (t = 0) to vertex b (t = 1): for degree 1, 1 − t and t;
// for degree 2, (1 − t)(1 − 2t), t(2t − 1) and 4t(1 − t) for the midpoint.
func edgeShape(degree int, t float64, phi []float64) []float64 {
	if degree == 1 {
		return append(phi[:0], 1-t, t)
	}
	return append(phi[:0], (1-t)*(1-2*t), t*(2*t-1), 4*t*(1-t))
}

// assembleNeumann adds ∫_E g_N φ_i ds over the Neumann edges to b, with a
// Gauss–Legendre rule of degree p + LoadExtraDegree.
func assembleNeumann(s *Space, p *Problem, bnd []int32, b []float64) error {
	if len(p.Neumann) == 0 {
		return nil
	}
	m := s.Mesh
	rule, err := quadrature.ForLine(s.Degree + LoadExtraDegree)
	if err != nil {
		return err
	}
	nv := int32(m.NumVertices())
	phi := make([]float64, 0, 3)
	for _, be := range bnd {
		e := int(be)
		gn, ok := p.Neumann[m.EdgeTag[e]]
		if !ok || gn == nil {
			continue
		}
		va, vb := m.Edge[2*e], m.Edge[2*e+1]
		ax, ay := m.Vertex(int(va))
		bx, by := m.Vertex(int(vb))
		length := m.EdgeLength(e)
		dofs := []int32{va, vb, nv + int32(e)}
		for q, t := range rule.X {
			x, y := ax+t*(bx-ax), ay+t*(by-ay)
			v := gn(x, y)
			if math.IsNaN(v) || math.IsInf(v, 0) {
				return atTag(m.EdgeTag[e], fmt.Errorf("%w: Neumann data %g at (%g, %g)", ErrNotFinite, v, x, y))
			}
			phi = edgeShape(s.Degree, t, phi)
			for i, f := range phi {
				b[dofs[i]] += rule.W[q] * length * v * f
			}
		}
	}
	return nil
}

// boundaryEdges returns the boundary edges of m in ascending order, from a
// parallel scan.
func boundaryEdges(m *mesh.Mesh) []int32 {
	ne := m.NumEdges()
	const chunk = 1 << 16
	parts := make([][]int32, (ne+chunk-1)/chunk)
	_ = parallel.For(len(parts), 1, func(lo, hi int) error {
		for c := lo; c < hi; c++ {
			var part []int32
			for e := c * chunk; e < min((c+1)*chunk, ne); e++ {
				if m.EdgeTri[2*e+1] < 0 {
					part = append(part, int32(e))
				}
			}
			parts[c] = part
		}
		return nil
	})
	var out []int32
	for _, part := range parts {
		out = append(out, part...)
	}
	return out
}

// dirichletValues returns the Dirichlet mask and the values g_D at the
// Dirichlet nodes, taking each node's value from the smallest tag it
// touches.
func dirichletValues(s *Space, p *Problem, bnd []int32, w *Workspace) (fixed []bool, g []float64, err error) {
	m := s.Mesh
	n := s.NumDOF()
	fixed = make([]bool, n)
	g = w.float64s(n, true)
	nv := int32(m.NumVertices())
	set := func(tag int32, gd Func, d int32) error {
		if fixed[d] {
			return nil
		}
		fixed[d] = true
		if gd == nil {
			return nil
		}
		x, y := s.DOFPoint(int(d))
		v := gd(x, y)
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return atTag(tag, fmt.Errorf("%w: Dirichlet data %g at (%g, %g)", ErrNotFinite, v, x, y))
		}
		g[d] = v
		return nil
	}
	for _, tag := range p.DirichletTags() {
		gd := p.Dirichlet[tag]
		for _, e := range bnd {
			if m.EdgeTag[e] != tag {
				continue
			}
			ds := []int32{m.Edge[2*e], m.Edge[2*e+1], nv + e}
			if s.Degree == 1 {
				ds = ds[:2]
			}
			for _, d := range ds {
				if err := set(tag, gd, d); err != nil {
					return nil, nil, err
				}
			}
		}
	}
	return fixed, g, nil
}

// eliminate moves the Dirichlet values to the right-hand side and replaces
// the rows and columns of the Dirichlet DOFs by those of the identity,
// keeping A symmetric. The pattern is symmetric, so the column entries
// (j, i) of a Dirichlet DOF i are found from its row; each free row j
// subtracts a_ji g_i in ascending order of i, the order of its columns.
// The cost is proportional to the Dirichlet rows.
func (sys *System) eliminate(fixed []bool, g []float64) {
	a, b := sys.A, sys.B
	for i, f := range fixed {
		if f {
			sys.Dirichlet = append(sys.Dirichlet, int32(i))
		}
	}
	for _, i := range sys.Dirichlet {
		for q := a.RowPtr[i]; q < a.RowPtr[i+1]; q++ {
			j := a.Col[q]
			if j == i || fixed[j] {
				continue
			}
			row := a.Col[a.RowPtr[j]:a.RowPtr[j+1]]
			qj := a.RowPtr[j] + int32(search(row, i))
			b[j] -= a.Val[qj] * g[i]
			a.Val[qj] = 0
		}
	}
	for _, i := range sys.Dirichlet {
		for q := a.RowPtr[i]; q < a.RowPtr[i+1]; q++ {
			if a.Col[q] == i {
				a.Val[q] = 1
			} else {
				a.Val[q] = 0
			}
		}
		b[i] = g[i]
	}
}
