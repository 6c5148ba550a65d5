package fem

import (
	"fmt"
	"math"
	"slices"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// System is an assembled linear system A u = B of a Problem on a Space.
//
// A is symmetric positive definite (semi-definite for a pure Neumann
// problem). The rows and columns of the Dirichlet DOFs are those of the
// identity, with the Dirichlet lift moved to B, so that B[i] = g_D(node i)
// for a Dirichlet DOF i and the DOF numbering is that of the Space.
type System struct {
	Space     *Space
	Problem   *Problem
	A         *Matrix
	B         []float64
	Dirichlet []int32 // the Dirichlet DOFs, ascending

	work *Workspace // the workspace it was assembled in, or nil
}

// Quadrature degrees used by Assemble (exact for polynomial data of these
// degrees): the stiffness with piecewise-constant diffusion is integrated
// exactly (degree 2p − 2); diffusion given by AFunc uses degree 2p; the
// reaction term is exact (degree 2p); the load and the Neumann data use
// degree p + LoadExtraDegree; the Robin terms α ∫_E u v and ∫_E g_R v use
// degree 2p + LoadExtraDegree (the first exact for constant α).
const LoadExtraDegree = 2

// Assemble builds the linear system of p on s. Every pass is split over
// GOMAXPROCS goroutines and every entry is summed in an order that does not
// depend on the split, so the result is bit-identical whatever GOMAXPROCS
// is. For P1 the matrix is built on the mesh's graph: each triangle writes
// the entry of each of its edges into a slot of its own, the off-diagonal
// entry of an edge is the sum of its one or two slots, and the diagonal is
// minus the sum of the row's off-diagonal stiffness entries (Σ_j ∇λ_j = 0
// on every triangle) plus the sum of its mass entries (the P1 mass matrix
// has M_ii = Σ_{j≠i} M_ij); the load of a vertex in a triangle is split in
// halves over the triangle's two edges at the vertex and summed over the
// row. P2 follows the same scheme (see assembleP2): entries of one
// triangle are written directly, those of an edge through slots, and the
// vertex diagonals are minus the row sums. Assemble is linear in the
// number of triangles.
//
// The Robin terms are added edge by edge in ascending edge order, after
// the element terms (see assembleRobin).
//
// It returns an error wrapping ErrNotFinite, with the triangle and point,
// when the source, the diffusion or the boundary data evaluate to NaN or
// infinity, ErrDiffusion when AFunc gives a tensor that is not positive
// definite, and the errors of Problem.Check.
func Assemble(s *Space, p *Problem) (*System, error) {
	return assemble(s, p, nil)
}

// assemble is Assemble, with the arrays taken from w (new ones for a nil
// w) and its scratch given back to w.
func assemble(s *Space, p *Problem, w *Workspace) (*System, error) {
	if s == nil {
		return nil, fmt.Errorf("fem: Assemble: nil space: %w", ErrArgument)
	}
	if err := p.Check(s.Mesh); err != nil {
		return nil, err
	}
	rules, err := elementRules(s.Degree, p)
	if err != nil {
		return nil, err
	}
	var a *Matrix
	var b []float64
	if s.Degree == 1 {
		if a, b, err = assembleP1(s, p, rules, w); err != nil {
			return nil, err
		}
	} else {
		a = pattern(s, w)
		b = w.float64s(s.NumDOF(), true)
		if err := assembleP2(s, p, rules, a, b, w); err != nil {
			return nil, err
		}
	}
	if p.Goal != nil {
		if err := addGoalLoad(s, p, b); err != nil {
			return nil, err
		}
	}
	bnd := boundaryEdges(s.Mesh)
	if err := assembleNeumann(s, p, bnd, b); err != nil {
		return nil, err
	}
	if err := assembleRobin(s, p, bnd, a, b); err != nil {
		return nil, err
	}
	fixed, g, err := dirichletValues(s, p, bnd, w)
	if err != nil {
		return nil, err
	}
	sys := &System{Space: s, Problem: p, A: a, B: b}
	sys.eliminate(fixed, g)
	w.give(nil, g)
	if p.pureNeumann() {
		mean := 0.0
		for _, v := range b {
			mean += v
		}
		mean /= float64(len(b))
		for i := range b {
			b[i] -= mean
		}
	}
	return sys, nil
}

// pattern returns the matrix with the sparsity of s (all DOF pairs that
// share a triangle) and zero values. The DOFs of the triangles around each
// DOF (those of a vertex by the vertex-to-triangle lists, those of an edge
// by its one or two triangles) are gathered and deduplicated with a stamp
// per DOF and sorted, in parallel chunks of rows: linear for
// meshes of bounded vertex degree.
func pattern(s *Space, w *Workspace) *Matrix {
	m := s.Mesh
	n, nv := s.NumDOF(), int32(m.NumVertices())
	start, vt := m.VertexTriangles()
	p2 := s.Degree == 2
	// fill writes the distinct DOFs that share a triangle with DOF d to
	// dst and returns their number; stamp[c] == d+1 marks those seen.
	fill := func(stamp []int32, d int32, dst []int32) int32 {
		var tris []int32
		if d < nv {
			tris = vt[start[d]:start[d+1]]
		} else {
			e := d - nv
			tris = m.EdgeTri[2*e : 2*e+2]
		}
		c := int32(0)
		for _, t := range tris {
			if t < 0 {
				continue
			}
			for i := range int32(3) {
				u, e := m.Tri[3*t+i], nv+m.TriEdge[3*t+i]
				if stamp[u] != d+1 {
					stamp[u] = d + 1
					dst[c] = u
					c++
				}
				if p2 && stamp[e] != d+1 {
					stamp[e] = d + 1
					dst[c] = e
					c++
				}
			}
		}
		return c
	}
	// Each chunk of rows is gathered into its own buffer (a row of d has
	// at most 6 DOFs per triangle of d), then the buffers are copied into
	// place.
	const chunk = 1 << 14
	nc := (n + chunk - 1) / chunk
	bufs := make([][]int32, nc)
	rowPtr := w.int32s(n+1, true)
	_ = parallel.For(nc, 1, func(lo, hi int) error {
		stamp := make([]int32, n)
		for c := lo; c < hi; c++ {
			buf := make([]int32, 0, 20*chunk)
			for d := c * chunk; d < min((c+1)*chunk, n); d++ {
				bound := 12 // an edge has two triangles at most
				if d < int(nv) {
					bound = 6 * int(start[d+1]-start[d])
				}
				at := len(buf)
				buf = slices.Grow(buf, bound)[:at+bound]
				k := int(fill(stamp, int32(d), buf[at:]))
				buf = buf[:at+k]
				slices.Sort(buf[at:])
				rowPtr[d+1] = int32(k)
			}
			bufs[c] = buf
		}
		return nil
	})
	for d := range n {
		rowPtr[d+1] += rowPtr[d]
	}
	cols := w.int32s(int(rowPtr[n]), false)
	_ = parallel.For(nc, 1, func(lo, hi int) error {
		for c := lo; c < hi; c++ {
			copy(cols[rowPtr[c*chunk]:], bufs[c])
		}
		return nil
	})
	return &Matrix{Rows: n, Cols: n, RowPtr: rowPtr, Col: cols, Val: w.float64s(int(rowPtr[n]), true)}
}

// elementWork holds one goroutine's buffers for element computations.
type elementWork struct {
	g    geometry
	phi  []float64
	grad [][2]float64
}

func newElementWork(ld int) *elementWork {
	return &elementWork{phi: make([]float64, ld), grad: make([][2]float64, ld)}
}

// search returns the position of c in the ascending slice row, which must
// contain it.
func search(row []int32, c int32) int {
	i, j := 0, len(row)
	for i < j {
		h := int(uint(i+j) >> 1)
		if row[h] < c {
			i = h + 1
		} else {
			j = h
		}
	}
	return i
}

type rules struct {
	stiff, mass, load *quadrature.Triangle
}

func elementRules(deg int, p *Problem) (rules, error) {
	sd := 2 * (deg - 1)
	if !p.PiecewiseConstant() {
		sd = 2 * deg
	}
	var r rules
	var err error
	if r.stiff, err = quadrature.ForTriangle(sd); err != nil {
		return r, err
	}
	if r.mass, err = quadrature.ForTriangle(2 * deg); err != nil {
		return r, err
	}
	r.load, err = quadrature.ForTriangle(deg + LoadExtraDegree)
	return r, err
}

// element computes the element matrix (row-major, ld × ld) and load of
// triangle k.
func element(s *Space, p *Problem, r rules, w *elementWork, k int, ke, fe []float64) error {
	deg, ld := s.Degree, s.LocalDOFs()
	g := &w.g
	s.geom(g, k)
	clear(ke)
	clear(fe)
	var t Tensor
	if p.PiecewiseConstant() {
		cx, cy := g.point([3]float64{1. / 3, 1. / 3, 1. / 3})
		t = p.Diffusion(cx, cy, g.region)
		if deg == 1 {
			return elementP1(p, r, g, t, k, ke, fe)
		}
		stiffnessP2(g, t, ke)
	}
	for q := range r.stiff.Len() {
		if p.PiecewiseConstant() {
			break // the closed form above
		}
		l := [3]float64{r.stiff.Bary[3*q], r.stiff.Bary[3*q+1], r.stiff.Bary[3*q+2]}
		if !p.PiecewiseConstant() {
			x, y := g.point(l)
			t = p.Diffusion(x, y, g.region)
			if !t.valid() {
				return atTriangle(k, x, y, fmt.Errorf("%w: %+v", ErrDiffusion, t))
			}
		}
		shapeGrad(deg, g, l, w.grad)
		wq := r.stiff.W[q] * g.area
		for i := range ld {
			fx, fy := t.Apply(w.grad[i][0], w.grad[i][1])
			fx, fy = wq*fx, wq*fy
			for j := i; j < ld; j++ {
				ke[i*ld+j] += fx*w.grad[j][0] + fy*w.grad[j][1]
			}
		}
	}
	if p.C != 0 {
		for q := range r.mass.Len() {
			l := [3]float64{r.mass.Bary[3*q], r.mass.Bary[3*q+1], r.mass.Bary[3*q+2]}
			shape(deg, l, w.phi)
			wq := p.C * r.mass.W[q] * g.area
			for i := range ld {
				for j := i; j < ld; j++ {
					ke[i*ld+j] += wq * w.phi[i] * w.phi[j]
				}
			}
		}
	}
	for i := range ld { // the element matrix is symmetric: mirror the upper triangle
		for j := range i {
			ke[i*ld+j] = ke[j*ld+i]
		}
	}
	if p.HasSource() {
		for q := range r.load.Len() {
			l := [3]float64{r.load.Bary[3*q], r.load.Bary[3*q+1], r.load.Bary[3*q+2]}
			x, y := g.point(l)
			f := p.Source(x, y, g.region)
			if math.IsNaN(f) || math.IsInf(f, 0) {
				return atTriangle(k, x, y, fmt.Errorf("%w: source f = %g", ErrNotFinite, f))
			}
			shape(deg, l, w.phi)
			wq := f * r.load.W[q] * g.area
			for i := range ld {
				fe[i] += wq * w.phi[i]
			}
		}
	}
	return nil
}

// stiffnessP2 writes the upper triangle (j ≥ i) of the P2 stiffness
// matrix of a constant tensor t into ke, in closed form. With
// G_ab = |T| ∇λ_a·t∇λ_b, the gradients ∇φ_i = (4λ_i − 1)∇λ_i and
// ∇φ_{3+m} = 4(λ_p∇λ_q + λ_q∇λ_p) (p, q the ends of the edge opposite
// vertex m) and the means of λ_a (1/3) and λ_aλ_b ((1 + δ_ab)/12) over T
// give K_ii = G_ii, K_ij = −G_ij/3 (vertices i ≠ j); K_{i,3+m} = 4/3 G_io
// when i is an end of edge m and o its other end, 0 when i = m; and
// K_{3+m,3+n} = 4/3 [(1+δ_pr)G_qs + (1+δ_ps)G_qr + (1+δ_qr)G_ps + (1+δ_qs)G_pr]
// for edges p–q and r–s. The degree-2 rule gives the same, exactly.
func stiffnessP2(g *geometry, t Tensor, ke []float64) {
	var G [3][3]float64
	for a := range 3 {
		fx, fy := t.Apply(g.gl[a][0], g.gl[a][1])
		for b := a; b < 3; b++ {
			G[a][b] = g.area * (fx*g.gl[b][0] + fy*g.gl[b][1])
			G[b][a] = G[a][b]
		}
	}
	d := func(a, b int) float64 {
		if a == b {
			return 2
		}
		return 1
	}
	for i := range 3 {
		ke[6*i+i] = G[i][i]
		for j := i + 1; j < 3; j++ {
			ke[6*i+j] = -G[i][j] / 3
		}
		for m := range 3 {
			p, q := (m+1)%3, (m+2)%3
			switch i {
			case p:
				ke[6*i+3+m] = 4. / 3 * G[i][q]
			case q:
				ke[6*i+3+m] = 4. / 3 * G[i][p]
			default:
				ke[6*i+3+m] = 0
			}
		}
	}
	for m := range 3 {
		p, q := (m+1)%3, (m+2)%3
		for n := m; n < 3; n++ {
			r, s := (n+1)%3, (n+2)%3
			ke[6*(3+m)+3+n] = 4. / 3 * (d(p, r)*G[q][s] + d(p, s)*G[q][r] + d(q, r)*G[p][s] + d(q, s)*G[p][r])
		}
	}
}

// elementP1 computes the P1 element matrix and load in closed form for a
// constant tensor t: K_ij = |T| ∇λ_i·t∇λ_j + c|T|(1 + δ_ij)/12, and the load
// by the load rule.
func elementP1(p *Problem, r rules, g *geometry, t Tensor, k int, ke, fe []float64) error {
	for i := range 3 {
		fx, fy := t.Apply(g.gl[i][0], g.gl[i][1])
		for j := i; j < 3; j++ {
			v := g.area * (fx*g.gl[j][0] + fy*g.gl[j][1])
			if p.C != 0 {
				if i == j {
					v += p.C * g.area / 6
				} else {
					v += p.C * g.area / 12
				}
			}
			ke[3*i+j], ke[3*j+i] = v, v
		}
	}
	if !p.HasSource() {
		return nil
	}
	f, err := loadP1(p, r, g, k)
	copy(fe, f[:])
	return err
}
