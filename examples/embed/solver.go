package main

// This file is the "in-house solver": a complete P1 finite element
// discretization of
//
//	−∇·(a ∇u) = f  in Ω,   u = g_D on the Dirichlet edges,
//
// written without the library's assembly or linear algebra, the way a team
// with its own code would have it. Only the mesh arrays and the problem
// data are taken from the library. Replace the body of Solve with a call
// into your own code; what the adaptive loop needs is the contract of
// adapt.Solver: nodal values, one per vertex, in the mesh's vertex order.

import (
	"errors"
	"fmt"
	"math"
	"slices"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/fem"
)

// inHouse is a P1 solver with its own element matrices, its own sparse
// matrix format and its own preconditioned conjugate gradient method.
type inHouse struct {
	// Tol is the relative residual ‖b − K u‖₂ / ‖b‖₂ at which the conjugate
	// gradient method stops; zero means 1e-10.
	Tol float64
}

var _ adapt.Solver = inHouse{}

// Solve implements adapt.Solver. It returns the nodal values of the P1
// solution, one per vertex of s.Mesh, and the number of conjugate gradient
// iterations. guess, if not nil, is the starting iterate (the previous
// step's solution carried to this mesh); its values at Dirichlet vertices
// are not used, those take the boundary data.
func (h inHouse) Solve(s *fem.Space, p *fem.Problem, guess []float64) ([]float64, int, error) {
	if s == nil || s.Mesh == nil || p == nil {
		return nil, 0, errors.New("in-house solver: nil space or problem")
	}
	if s.Degree != 1 {
		return nil, 0, fmt.Errorf("in-house solver: degree %d: only P1 (degree 1) elements are implemented", s.Degree)
	}
	if err := supported(p); err != nil {
		return nil, 0, err
	}
	if err := p.Check(s.Mesh); err != nil {
		return nil, 0, fmt.Errorf("in-house solver: %w", err)
	}
	n := s.Mesh.NumVertices()
	if guess != nil && len(guess) != n {
		return nil, 0, fmt.Errorf("in-house solver: guess has %d values, want %d", len(guess), n)
	}
	g, fixed, err := dirichlet(s, p)
	if err != nil {
		return nil, 0, err
	}
	sys, err := assemble(s, p, g, fixed)
	if err != nil {
		return nil, 0, err
	}

	// Unknowns: the free vertices, started from the guess.
	x := make([]float64, len(sys.vertex))
	if guess != nil {
		for i, v := range sys.vertex {
			x[i] = guess[v]
		}
	}
	tol := h.Tol
	if tol == 0 {
		tol = 1e-10
	}
	iters, err := pcg(sys.k, sys.b, x, tol, 10*len(x)+100)
	if err != nil {
		return nil, iters, err
	}

	// Nodal values: the boundary data on Dirichlet vertices, the computed
	// values elsewhere.
	u := g
	for i, v := range sys.vertex {
		u[v] = x[i]
	}
	return u, iters, nil
}

// supported rejects the parts of fem.Problem that this solver does not
// implement, rather than silently ignoring them.
func supported(p *fem.Problem) error {
	switch {
	case p.AFunc != nil:
		return errors.New("in-house solver: only piecewise constant diffusion (Problem.A) is implemented, not AFunc")
	case p.C != 0:
		return errors.New("in-house solver: the reaction term c u is not implemented")
	case p.PureNeumann:
		return errors.New("in-house solver: pure Neumann problems are not implemented")
	case len(p.Robin) > 0:
		return errors.New("in-house solver: Robin conditions are not implemented")
	}
	for tag, gn := range p.Neumann {
		if gn != nil {
			return fmt.Errorf("in-house solver: boundary tag %d: only zero Neumann data (a nil Func) is implemented", tag)
		}
	}
	return nil
}

// dirichlet returns the nodal interpolant of the Dirichlet data, g[v] on
// every vertex of a Dirichlet edge (0 elsewhere), and the mask of those
// vertices. Tags are visited in ascending order and a vertex keeps the
// first value it gets, so where edges of several tags meet, the smallest
// tag's data is used, as fem.Problem documents.
func dirichlet(s *fem.Space, p *fem.Problem) (g []float64, fixed []bool, err error) {
	m := s.Mesh
	g = make([]float64, m.NumVertices())
	fixed = make([]bool, m.NumVertices())
	for _, tag := range p.DirichletTags() {
		gd := p.Dirichlet[tag] // nil means g_D = 0
		for e := range m.NumEdges() {
			if m.EdgeTag[e] != tag || !m.IsBoundary(e) {
				continue
			}
			for _, v := range m.Edge[2*e : 2*e+2] {
				if fixed[v] {
					continue
				}
				fixed[v] = true
				if gd == nil {
					continue
				}
				x, y := m.Vertex(int(v))
				if g[v] = gd(x, y); math.IsNaN(g[v]) || math.IsInf(g[v], 0) {
					return nil, nil, fmt.Errorf("in-house solver: Dirichlet data on tag %d is %g at (%g, %g)", tag, g[v], x, y)
				}
			}
		}
	}
	return g, fixed, nil
}

// csr is a square sparse matrix in compressed sparse row form: the
// nonzeros of row i are Val[RowPtr[i]:RowPtr[i+1]], in columns Col[...],
// sorted ascending within each row.
type csr struct {
	rowPtr []int
	col    []int32
	val    []float64
}

func (a *csr) rows() int { return len(a.rowPtr) - 1 }

// at returns the index into col/val of entry (i, j), which must be in the
// sparsity pattern.
func (a *csr) at(i, j int32) int {
	lo, hi := a.rowPtr[i], a.rowPtr[i+1]
	q, ok := slices.BinarySearch(a.col[lo:hi], j)
	if !ok {
		panic("in-house solver: entry outside the sparsity pattern") // cannot happen: the pattern comes from the same triangles
	}
	return lo + q
}

// mulVec sets y = A x.
func (a *csr) mulVec(y, x []float64) {
	for i := range y {
		sum := 0.0
		for q := a.rowPtr[i]; q < a.rowPtr[i+1]; q++ {
			sum += a.val[q] * x[a.col[q]]
		}
		y[i] = sum
	}
}

// system is the linear system for the free (non-Dirichlet) vertices:
// K x = b, where x[i] is the value at vertex vertex[i].
type system struct {
	k      *csr
	b      []float64
	vertex []int32 // free unknown → mesh vertex
}

// quad3 is the symmetric 3-point rule on a triangle, exact for quadratics:
// barycentric points (2/3, 1/6, 1/6) and permutations, weight 1/3 of the
// area each. Its points are inside the triangle, so f is never evaluated on
// the boundary or at a vertex (where a singular source might blow up).
var quad3 = [3][3]float64{
	{2.0 / 3, 1.0 / 6, 1.0 / 6},
	{1.0 / 6, 2.0 / 3, 1.0 / 6},
	{1.0 / 6, 1.0 / 6, 2.0 / 3},
}

// assemble builds K and b on the free vertices, eliminating the Dirichlet
// vertices: their known values g times their columns of the stiffness
// matrix move to the right-hand side.
func assemble(s *fem.Space, p *fem.Problem, g []float64, fixed []bool) (*system, error) {
	m := s.Mesh
	nv, nt := m.NumVertices(), m.NumTriangles()

	// Number the free vertices 0, 1, ...
	free := make([]int32, nv) // mesh vertex → free unknown, or -1
	var vertex []int32
	for v := range nv {
		free[v] = -1
		if !fixed[v] {
			free[v] = int32(len(vertex))
			vertex = append(vertex, int32(v))
		}
	}
	nf := len(vertex)

	// Sparsity pattern, built by sorting: every triangle adds its free-free
	// couplings to the rows of its free vertices (duplicates included), then
	// each row is sorted and its duplicates dropped.
	count := make([]int, nf+1)
	for k := range nt {
		for _, vi := range m.Tri[3*k : 3*k+3] {
			if i := free[vi]; i >= 0 {
				for _, vj := range m.Tri[3*k : 3*k+3] {
					if free[vj] >= 0 {
						count[i+1]++
					}
				}
			}
		}
	}
	for i := range nf {
		count[i+1] += count[i]
	}
	col := make([]int32, count[nf])
	next := slices.Clone(count[:nf])
	for k := range nt {
		for _, vi := range m.Tri[3*k : 3*k+3] {
			if i := free[vi]; i >= 0 {
				for _, vj := range m.Tri[3*k : 3*k+3] {
					if j := free[vj]; j >= 0 {
						col[next[i]] = j
						next[i]++
					}
				}
			}
		}
	}
	// Compact in place: the rows written so far never reach into the row
	// being read, which starts at count[i] ≥ len(a.col).
	a := &csr{rowPtr: make([]int, nf+1), col: col[:0]}
	for i := range nf {
		row := col[count[i]:count[i+1]]
		slices.Sort(row)
		a.col = append(a.col, slices.Compact(row)...)
		a.rowPtr[i+1] = len(a.col)
	}
	a.val = make([]float64, len(a.col))

	// Element matrices and loads.
	b := make([]float64, nf)
	for k := range nt {
		t := m.Tri[3*k : 3*k+3]
		ke, fe, err := element(s, p, k)
		if err != nil {
			return nil, err
		}
		for li, vi := range t {
			i := free[vi]
			if i < 0 {
				continue
			}
			b[i] += fe[li]
			for lj, vj := range t {
				if j := free[vj]; j >= 0 {
					a.val[a.at(i, j)] += ke[li][lj]
				} else {
					b[i] -= ke[li][lj] * g[vj] // elimination of a Dirichlet vertex
				}
			}
		}
	}
	return &system{k: a, b: b, vertex: vertex}, nil
}

// element returns the P1 element stiffness matrix and load vector of
// triangle k:
//
//	K_ij = ∫_T (a ∇φ_i)·∇φ_j = |T| (a ∇φ_i)·∇φ_j,   f_i = ∫_T f φ_i,
//
// with the gradients of the barycentric basis functions
// ∇φ_i = (y_{i+1} − y_{i+2}, x_{i+2} − x_{i+1}) / (2|T|) (indices mod 3,
// vertices counter-clockwise), a the region's constant tensor, and the
// load integrated with quad3.
func element(s *fem.Space, p *fem.Problem, k int) (ke [3][3]float64, fe [3]float64, err error) {
	m := s.Mesh
	var x, y [3]float64
	for i, v := range m.Tri[3*k : 3*k+3] {
		x[i], y[i] = m.Vertex(int(v))
	}
	area := m.Area(k)
	var grad [3][2]float64
	for i := range 3 {
		i1, i2 := (i+1)%3, (i+2)%3
		grad[i] = [2]float64{(y[i1] - y[i2]) / (2 * area), (x[i2] - x[i1]) / (2 * area)}
	}
	a := p.Diffusion(0, 0, m.Region[k]) // constant on the region: the point does not matter
	for i := range 3 {
		ax, ay := a.Apply(grad[i][0], grad[i][1])
		for j := range 3 {
			ke[i][j] = area * (ax*grad[j][0] + ay*grad[j][1])
		}
	}
	for _, l := range quad3 {
		qx := l[0]*x[0] + l[1]*x[1] + l[2]*x[2]
		qy := l[0]*y[0] + l[1]*y[1] + l[2]*y[2]
		f := p.Source(qx, qy, m.Region[k])
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return ke, fe, fmt.Errorf("in-house solver: source f = %g at (%g, %g)", f, qx, qy)
		}
		for i := range 3 {
			fe[i] += area / 3 * f * l[i] // φ_i at the point is its barycentric coordinate l[i]
		}
	}
	return ke, fe, nil
}

// pcg solves K x = b by the conjugate gradient method with the Jacobi
// (diagonal) preconditioner, starting from x, until the relative residual
// ‖b − K x‖₂ / ‖b‖₂ ≤ tol. It returns the number of iterations.
func pcg(k *csr, b, x []float64, tol float64, maxIter int) (int, error) {
	n := k.rows()
	bnorm := norm(b)
	if bnorm == 0 { // the solution is zero
		clear(x)
		return 0, nil
	}
	inv := make([]float64, n) // inverse of the diagonal
	for i := range n {
		d := k.val[k.at(int32(i), int32(i))]
		if !(d > 0) {
			return 0, fmt.Errorf("in-house solver: diagonal entry %d is %g, want > 0", i, d)
		}
		inv[i] = 1 / d
	}
	r := make([]float64, n)
	z := make([]float64, n)
	d := make([]float64, n)
	q := make([]float64, n)
	k.mulVec(q, x)
	for i := range n {
		r[i] = b[i] - q[i]
		z[i] = inv[i] * r[i]
	}
	copy(d, z)
	rz := dot(r, z)
	for it := 0; ; it++ {
		res := norm(r) / bnorm
		if res <= tol {
			return it, nil
		}
		if it == maxIter {
			return it, fmt.Errorf("in-house solver: no convergence in %d iterations (relative residual %.3g)", it, res)
		}
		k.mulVec(q, d)
		alpha := rz / dot(d, q)
		for i := range n {
			x[i] += alpha * d[i]
			r[i] -= alpha * q[i]
			z[i] = inv[i] * r[i]
		}
		rzNew := dot(r, z)
		beta := rzNew / rz
		rz = rzNew
		for i := range n {
			d[i] = z[i] + beta*d[i]
		}
	}
}

func dot(a, b []float64) float64 {
	s := 0.0
	for i := range a {
		s += a[i] * b[i]
	}
	return s
}

func norm(a []float64) float64 { return math.Sqrt(dot(a, a)) }
