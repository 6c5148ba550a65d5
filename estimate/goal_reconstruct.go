package estimate

import (
	"fmt"
	"math"
	"slices"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
)

// Enriched is a continuous piecewise polynomial of degree p + 1 on the
// mesh of a degree-p function, given by its values at the Lagrange nodes
// of degree p + 1 of each triangle (Node, NodesPer values per triangle):
//
//	degree 2: the vertices v0, v1, v2, then the midpoints of the edges
//	          opposite v0, v1, v2 (the local order of fem.Space);
//	degree 3: the vertices, then for the edge opposite each vertex i, with
//	          j = i+1, k = i+2 (mod 3), the points λ_j = 2/3, λ_k = 1/3 and
//	          λ_j = 1/3, λ_k = 2/3, then the centroid.
type Enriched struct {
	Mesh     *fem.Space // the space of the reconstructed function
	Degree   int        // p + 1: 2 or 3
	NodesPer int        // 6 or 10
	Node     []float64
}

// Local returns the value at barycentric point l of triangle k.
func (e *Enriched) Local(k int, l [3]float64) float64 {
	var b [10]float64
	enrichedShape(e.Degree, l, b[:])
	v := 0.0
	for i, y := range e.Node[e.NodesPer*k : e.NodesPer*(k+1)] {
		v += b[i] * y
	}
	return v
}

// enrichedShape fills b with the Lagrange basis of the given degree (2
// or 3) at l, in Enriched's node order.
func enrichedShape(deg int, l [3]float64, b []float64) {
	if deg == 2 {
		fem.Shape(2, l, b)
		return
	}
	for i := range 3 {
		j, k := (i+1)%3, (i+2)%3
		b[i] = 0.5 * l[i] * (3*l[i] - 1) * (3*l[i] - 2)
		b[3+2*i] = 4.5 * l[j] * l[k] * (3*l[j] - 1)
		b[4+2*i] = 4.5 * l[j] * l[k] * (3*l[k] - 1)
	}
	b[9] = 27 * l[0] * l[1] * l[2]
}

// enrichedNodes returns the barycentric coordinates of the nodes of the
// given degree, in Enriched's order.
func enrichedNodes(deg int) [][3]float64 {
	n := [][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}
	for i := range 3 {
		j, k := (i+1)%3, (i+2)%3
		if deg == 2 {
			var l [3]float64
			l[j], l[k] = 0.5, 0.5
			n = append(n, l)
			continue
		}
		var a, b [3]float64
		a[j], a[k] = 2./3, 1./3
		b[j], b[k] = 1./3, 2./3
		n = append(n, a, b)
	}
	if deg == 3 {
		n = append(n, [3]float64{1. / 3, 1. / 3, 1. / 3})
	}
	return n
}

// vertexFit is the least-squares polynomial of degree q about a vertex:
// Σ c_m ξ^a η^b with ξ = (x − X)/H, η = (y − Y)/H.
type vertexFit struct {
	X, Y, H float64
	c       [10]float64
}

// fitMonomials fills mono with ξ^a η^b for a + b ≤ q, by total degree,
// and returns their number.
func fitMonomials(q int, xi, eta float64, mono []float64) int {
	var px, py [4]float64
	px[0], py[0] = 1, 1
	for i := 1; i <= q; i++ {
		px[i], py[i] = px[i-1]*xi, py[i-1]*eta
	}
	n := 0
	for d := 0; d <= q; d++ {
		for b := 0; b <= d; b++ {
			mono[n] = px[d-b] * py[b]
			n++
		}
	}
	return n
}

func (f *vertexFit) at(q int, x, y float64) float64 {
	var mono [10]float64
	n := fitMonomials(q, (x-f.X)/f.H, (y-f.Y)/f.H, mono[:])
	v := 0.0
	for i := range n {
		v += f.c[i] * mono[i]
	}
	return v
}

// Reconstruct returns the degree-(p+1) reconstruction y⁺ of the degree-p
// function y, after Becker and Rannacher's higher-order interpolation of
// the dual solution:
//
//   - about each vertex v, the polynomial q_v of degree p + 1 that fits the
//     nodal values of y at the DOF nodes of the triangles around v in the
//     least-squares sense (in coordinates centred at v and scaled by the
//     patch's radius, solved by Householder QR); where those nodes do not
//     determine q_v (too few of them, as at a corner with one triangle, or
//     a rank-deficient fit), the patch grows by the triangles around its
//     vertices, up to four rings;
//   - y⁺ takes y's value at each vertex, the mean of q_a and q_b at the
//     other nodes of an edge a–b, and the mean of the three fits at the
//     centroid (degree 3), so that it is continuous;
//   - on the edges whose tag is in dirichlet, y⁺ keeps the trace of y.
//
// If y is the interpolant of a polynomial of degree p + 1 (with no
// Dirichlet edges, or one whose trace there is of degree p), every fit is
// that polynomial and y⁺ is it exactly: the reconstruction is exact for
// polynomials of degree p + 1 (TestReconstructExact). Reconstruct is linear
// in the size of the mesh; the vertices are split over GOMAXPROCS
// goroutines, each writing its own fit, so the result does not depend on
// GOMAXPROCS.
//
// References:
//   - R. Becker and R. Rannacher, An optimal control approach to a
//     posteriori error estimation in finite element methods, Acta Numerica
//     10 (2001) 1–102 (§3: the dual weights from a patchwise higher-order
//     interpolation of z_h).
func Reconstruct(y *fem.Function, dirichlet []int32) (*Enriched, error) {
	if y == nil || y.Space == nil || len(y.U) != y.Space.NumDOF() {
		return nil, fmt.Errorf("estimate: Reconstruct: nil function or wrong length: %w", ErrArgument)
	}
	s := y.Space
	m := s.Mesh
	p := s.Degree
	q := p + 1
	ncoef := (q + 1) * (q + 2) / 2
	nv, nt := m.NumVertices(), m.NumTriangles()
	start, vt := m.VertexTriangles()
	fits := make([]vertexFit, nv)
	err := parallel.For(nv, 512, func(lo, hi int) error {
		stamp := make([]int32, s.NumDOF())
		tstamp := make([]int32, nt)
		var tris, nodes []int32
		var dofs [6]int32
		var a, b []float64
		for v := lo; v < hi; v++ {
			mark := int32(v + 1)
			tris = tris[:0]
			for _, k := range vt[start[v]:start[v+1]] {
				tris = append(tris, k)
				tstamp[k] = mark
			}
			ok := false
			for ring := 0; ring <= 4 && !ok; ring++ {
				if ring > 0 {
					n := len(tris)
					for _, k := range tris[:n] {
						for _, w := range m.Tri[3*k : 3*k+3] {
							for _, k2 := range vt[start[w]:start[w+1]] {
								if tstamp[k2] != mark {
									tstamp[k2] = mark
									tris = append(tris, k2)
								}
							}
						}
					}
				}
				nodes = nodes[:0]
				for _, k := range tris {
					for _, d := range s.ElementDOFs(dofs[:0], int(k)) {
						if stamp[d] != mark {
							stamp[d] = mark
							nodes = append(nodes, d)
						}
					}
				}
				if len(nodes) < ncoef+1 {
					for _, d := range nodes {
						stamp[d] = 0
					}
					continue
				}
				slices.Sort(nodes) // a fixed order, whatever the patch's
				f := &fits[v]
				f.X, f.Y = m.Vertex(v)
				f.H = 0
				for _, d := range nodes {
					x, yy := s.DOFPoint(int(d))
					f.H = max(f.H, math.Hypot(x-f.X, yy-f.Y))
				}
				a = slices.Grow(a[:0], len(nodes)*ncoef)[:len(nodes)*ncoef]
				b = slices.Grow(b[:0], len(nodes))[:len(nodes)]
				for r, d := range nodes {
					x, yy := s.DOFPoint(int(d))
					fitMonomials(q, (x-f.X)/f.H, (yy-f.Y)/f.H, a[r*ncoef:(r+1)*ncoef])
					b[r] = y.U[d]
				}
				ok = leastSquares(a, b, len(nodes), ncoef, f.c[:ncoef])
				// Clear the node stamps for the next ring.
				for _, d := range nodes {
					stamp[d] = 0
				}
			}
			if !ok {
				return fmt.Errorf("estimate: Reconstruct: vertex %d: no patch of four rings determines a fit of degree %d: %w", v, q, ErrArgument)
			}
		}
		return nil
	})
	if err != nil {
		return nil, err
	}
	fixedEdge := make([]bool, m.NumEdges())
	for e := range m.NumEdges() {
		fixedEdge[e] = m.IsBoundary(e) && slices.Contains(dirichlet, m.EdgeTag[e])
	}
	nodes := enrichedNodes(q)
	per := len(nodes)
	out := &Enriched{Mesh: s, Degree: q, NodesPer: per, Node: make([]float64, per*nt)}
	_ = parallel.For(nt, 1024, func(lo, hi int) error {
		ev := fem.NewEvaluator(y)
		for k := lo; k < hi; k++ {
			ev.Load(k)
			tv := m.Tri[3*k : 3*k+3]
			dst := out.Node[per*k : per*(k+1)]
			for i, l := range nodes {
				x, yy := ev.Point(l)
				switch {
				case i < 3:
					dst[i] = y.U[tv[i]]
				case i == 9:
					dst[i] = (fits[tv[0]].at(q, x, yy) + fits[tv[1]].at(q, x, yy) + fits[tv[2]].at(q, x, yy)) / 3
				default:
					side := (i - 3) / (q - 1) // the edge opposite vertex side
					if fixedEdge[m.TriEdge[3*k+side]] {
						dst[i], _, _ = ev.Eval(l)
						continue
					}
					j, kk := (side+1)%3, (side+2)%3
					dst[i] = 0.5 * (fits[tv[j]].at(q, x, yy) + fits[tv[kk]].at(q, x, yy))
				}
			}
		}
		return nil
	})
	return out, nil
}

// leastSquares solves min ‖A c − b‖₂ for the n × k row-major A by
// Householder QR, overwriting A and b, and reports whether A has full
// column rank (every |R_jj| above 1e-9 times the largest column norm).
func leastSquares(a, b []float64, n, k int, c []float64) bool {
	scale := 0.0
	for j := range k {
		s := 0.0
		for i := range n {
			s += a[i*k+j] * a[i*k+j]
		}
		scale = max(scale, math.Sqrt(s))
	}
	for j := range k {
		norm := 0.0
		for i := j; i < n; i++ {
			norm += a[i*k+j] * a[i*k+j]
		}
		norm = math.Sqrt(norm)
		if norm <= 1e-9*scale {
			return false
		}
		alpha := -math.Copysign(norm, a[j*k+j])
		// v = x − alpha e_1, stored in place; vtv = 2 norm (norm + |x_1|).
		a[j*k+j] -= alpha
		vtv := 2 * norm * (norm + math.Abs(a[j*k+j]+alpha))
		for jj := j + 1; jj < k; jj++ {
			d := 0.0
			for i := j; i < n; i++ {
				d += a[i*k+j] * a[i*k+jj]
			}
			d = 2 * d / vtv
			for i := j; i < n; i++ {
				a[i*k+jj] -= d * a[i*k+j]
			}
		}
		d := 0.0
		for i := j; i < n; i++ {
			d += a[i*k+j] * b[i]
		}
		d = 2 * d / vtv
		for i := j; i < n; i++ {
			b[i] -= d * a[i*k+j]
		}
		a[j*k+j] = alpha // R_jj
	}
	for j := k - 1; j >= 0; j-- {
		v := b[j]
		for jj := j + 1; jj < k; jj++ {
			v -= a[j*k+jj] * c[jj]
		}
		c[j] = v / a[j*k+j]
	}
	return true
}
