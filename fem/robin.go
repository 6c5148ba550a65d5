package fem

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// RobinData is the Robin condition of one boundary tag,
//
//	a∇u·n + α u = g_R,
//
// the condition of convective heat transfer (α the heat transfer
// coefficient, g_R = α u_∞ for an ambient value u_∞) and of seepage
// through a semi-permeable layer. It adds α ∫_E u v ds to the bilinear form
// and ∫_E g_R v ds to the load on each edge E of the tag.
type RobinData struct {
	// Alpha is α, a constant ≥ 0, used where AlphaFunc is nil.
	Alpha float64
	// AlphaFunc, if not nil, gives α at a point and takes precedence over
	// Alpha. Its values must be finite and ≥ 0; assembly reports others.
	AlphaFunc Func
	// G is g_R; nil means 0.
	G Func
}

// alpha returns α at (x, y).
func (r RobinData) alpha(x, y float64) float64 {
	if r.AlphaFunc != nil {
		return r.AlphaFunc(x, y)
	}
	return r.Alpha
}

// Values returns α and g_R at (x, y) on an edge of the given tag, or an
// error (located at the tag) wrapping ErrNotFinite for a NaN or infinite
// value and ErrBoundaryCondition for a negative α.
func (r RobinData) Values(tag int32, x, y float64) (alpha, g float64, err error) {
	alpha = r.alpha(x, y)
	if math.IsNaN(alpha) || math.IsInf(alpha, 0) {
		return 0, 0, atTag(tag, fmt.Errorf("%w: Robin α = %g at (%g, %g)", ErrNotFinite, alpha, x, y))
	}
	if alpha < 0 {
		return 0, 0, atTag(tag, fmt.Errorf("%w: Robin α = %g at (%g, %g), want ≥ 0", ErrBoundaryCondition, alpha, x, y))
	}
	if r.G != nil {
		g = r.G(x, y)
		if math.IsNaN(g) || math.IsInf(g, 0) {
			return 0, 0, atTag(tag, fmt.Errorf("%w: Robin data g = %g at (%g, %g)", ErrNotFinite, g, x, y))
		}
	}
	return alpha, g, nil
}

// BoundaryFlux returns the normal flux a∇u·n that the condition of a
// boundary tag prescribes at the point (x, y) of one of its edges, where the
// solution has the value u:
//
//	g_N(x, y)            on a Neumann edge (0 for nil data),
//	g_R(x, y) − α(x, y) u on a Robin edge,
//	0                    on an edge of no tag in the maps (natural).
//
// It reports false for a Dirichlet tag, whose flux is not prescribed. The
// estimators of package estimate take their boundary residuals
// (prescribed flux minus a∇u_h·n) from it. Data that are NaN or infinite
// give an error wrapping ErrNotFinite, located at the tag.
func (p *Problem) BoundaryFlux(tag int32, x, y, u float64) (float64, bool, error) {
	if p.isDirichlet(tag) {
		return 0, false, nil
	}
	if r, ok := p.Robin[tag]; ok {
		alpha, g, err := r.Values(tag, x, y)
		if err != nil {
			return 0, true, err
		}
		return g - alpha*u, true, nil
	}
	gn := p.Neumann[tag]
	if gn == nil {
		return 0, true, nil
	}
	v := gn(x, y)
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, true, atTag(tag, fmt.Errorf("%w: Neumann data %g at (%g, %g)", ErrNotFinite, v, x, y))
	}
	return v, true, nil
}

// HasBoundaryData reports whether the prescribed flux on edges of the tag
// may be non-zero: a Neumann tag with data or a Robin tag. Edges of other
// tags are Dirichlet edges or carry a∇u·n = 0.
func (p *Problem) HasBoundaryData(tag int32) bool {
	if _, ok := p.Robin[tag]; ok {
		return true
	}
	return p.Neumann[tag] != nil
}

// robinEdge computes, for the Robin edge e (tag's data r) from vertex
// Edge[2e] (t = 0) to Edge[2e+1] (t = 1), the edge matrix
// me[i][j] = ∫_E α φ_i φ_j ds and load be[i] = ∫_E g_R φ_i ds of the traces
// of the basis functions (edgeShape order: the two ends, then for P2 the
// midpoint), with the Gauss–Legendre rule. It returns ∫_E α ds.
func robinEdge(s *Space, r RobinData, e int, rule *quadrature.Line, me *[3][3]float64, be *[3]float64) (float64, error) {
	m := s.Mesh
	tag := m.EdgeTag[e]
	ax, ay := m.Vertex(int(m.Edge[2*e]))
	bx, by := m.Vertex(int(m.Edge[2*e+1]))
	length := m.EdgeLength(e)
	*me, *be = [3][3]float64{}, [3]float64{}
	var phi [3]float64
	total := 0.0
	for q, t := range rule.X {
		x, y := ax+t*(bx-ax), ay+t*(by-ay)
		alpha, g, err := r.Values(tag, x, y)
		if err != nil {
			return 0, err
		}
		sh := edgeShape(s.Degree, t, phi[:0])
		w := rule.W[q] * length
		total += w * alpha
		for i, fi := range sh {
			be[i] += w * g * fi
			for j, fj := range sh {
				me[i][j] += w * alpha * fi * fj
			}
		}
	}
	return total, nil
}

// robinRule returns the Gauss–Legendre rule of Robin edges: degree 2p
// (exact for the edge matrix with constant α) plus LoadExtraDegree.
func robinRule(degree int) (*quadrature.Line, error) {
	return quadrature.ForLine(2*degree + LoadExtraDegree)
}

// edgeDOFs returns the DOFs of edge e in edgeShape order.
func edgeDOFs(s *Space, e int) []int32 {
	m := s.Mesh
	d := []int32{m.Edge[2*e], m.Edge[2*e+1], int32(m.NumVertices()) + int32(e)}
	return d[:s.Degree+1]
}

// assembleRobin adds the Robin terms to a and b, edge by edge in ascending
// order (a serial pass: the boundary has O(√N) edges on a mesh of N
// triangles of bounded shape). It must follow the rest of the assembly,
// which takes the diagonals of vertex rows from the element terms. It
// returns an error wrapping ErrIllPosed when the problem needs the Robin
// edges to fix the constant (no Dirichlet edge, c = 0) and α vanishes on
// all of them (AlphaFunc zero there), unless PureNeumann.
func assembleRobin(s *Space, p *Problem, bnd []int32, a *Matrix, b []float64) error {
	if len(p.Robin) == 0 {
		return nil
	}
	m := s.Mesh
	rule, err := robinRule(s.Degree)
	if err != nil {
		return err
	}
	at := func(row, col int32) int32 {
		return a.RowPtr[row] + int32(search(a.Col[a.RowPtr[row]:a.RowPtr[row+1]], col))
	}
	var me [3][3]float64
	var be [3]float64
	total := 0.0
	for _, e := range bnd {
		r, ok := p.Robin[m.EdgeTag[e]]
		if !ok {
			continue
		}
		ta, err := robinEdge(s, r, int(e), rule, &me, &be)
		if err != nil {
			return err
		}
		total += ta
		ds := edgeDOFs(s, int(e))
		for i, di := range ds {
			b[di] += be[i]
			for j, dj := range ds {
				a.Val[at(di, dj)] += me[i][j]
			}
		}
	}
	if total == 0 && !p.pureNeumann() && len(p.Dirichlet) == 0 && p.C == 0 {
		return fmt.Errorf("fem: %w: Robin α is zero on every Robin edge (pose it with α = 0 and PureNeumann)", ErrIllPosed)
	}
	return nil
}
