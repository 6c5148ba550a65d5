package fem

import (
	"fmt"
	"math"
	"runtime"
	"sync"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// Matrix is the sparse matrix of an assembled system: compressed sparse
// rows with int32 indices (row i holds Col[RowPtr[i]:RowPtr[i+1]], ascending,
// and Val likewise). It implements gonum's mat.Matrix for interoperation.
type Matrix = sparse.CSR

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
}

// Quadrature degrees used by Assemble (exact for polynomial data of these
// degrees): the stiffness with piecewise-constant diffusion is integrated
// exactly (degree 2p − 2); diffusion given by AFunc uses degree 2p; the
// reaction term is exact (degree 2p); the load and the Neumann data use
// degree p + LoadExtraDegree.
const LoadExtraDegree = 2

// block is the number of triangles whose element matrices are computed in
// parallel before being added, in triangle order, to the global matrix.
const block = 8192

// Assemble builds the linear system of p on s. The element loop is split
// over GOMAXPROCS goroutines and the element contributions are summed in
// triangle order, so the result is bit-identical whatever GOMAXPROCS is.
// Assemble is linear in the number of triangles.
//
// It returns an error wrapping ErrNotFinite, with the triangle and point,
// when the source, the diffusion or the boundary data evaluate to NaN or
// infinity, ErrDiffusion when AFunc gives a tensor that is not positive
// definite, and the errors of Problem.Check.
func Assemble(s *Space, p *Problem) (*System, error) {
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
		if a, b, err = assembleP1(s, p, rules); err != nil {
			return nil, err
		}
	} else {
		a = pattern(s)
		b = make([]float64, s.NumDOF())
		if err := assembleElements(s, p, rules, a, b); err != nil {
			return nil, err
		}
	}
	bnd := boundaryEdges(s.Mesh)
	if err := assembleNeumann(s, p, bnd, b); err != nil {
		return nil, err
	}
	fixed, g, err := dirichletValues(s, p, bnd)
	if err != nil {
		return nil, err
	}
	sys := &System{Space: s, Problem: p, A: a, B: b}
	sys.eliminate(fixed, g)
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
// share a triangle) and zero values. Rows are filled by a counting pass over
// the triangles and sorted by insertion, which is linear for meshes of
// bounded vertex degree.
func pattern(s *Space) *Matrix {
	n, nt, ld := s.NumDOF(), s.Mesh.NumTriangles(), s.LocalDOFs()
	count := make([]int32, n+1)
	dofs := make([]int32, 0, 6)
	for k := range nt {
		dofs = s.ElementDOFs(dofs, k)
		for _, d := range dofs {
			count[d+1] += int32(ld)
		}
	}
	for i := range n {
		count[i+1] += count[i]
	}
	cols := make([]int32, count[n])
	fill := append([]int32(nil), count[:n]...)
	for k := range nt {
		dofs = s.ElementDOFs(dofs, k)
		for _, d := range dofs {
			copy(cols[fill[d]:], dofs)
			fill[d] += int32(ld)
		}
	}
	rowPtr := make([]int32, n+1)
	out := int32(0)
	for i := range n {
		row := cols[count[i]:count[i+1]]
		for j := 1; j < len(row); j++ {
			for l := j; l > 0 && row[l-1] > row[l]; l-- {
				row[l-1], row[l] = row[l], row[l-1]
			}
		}
		for j, c := range row {
			if j == 0 || c != row[j-1] {
				cols[out] = c
				out++
			}
		}
		rowPtr[i+1] = out
	}
	cols = append([]int32(nil), cols[:out]...)
	return &Matrix{Rows: n, Cols: n, RowPtr: rowPtr, Col: cols, Val: make([]float64, out)}
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

// assembleElements adds the element matrices and loads of every triangle to
// a and b (P2); the positions of the entries are found by binary search in
// the rows.
func assembleElements(s *Space, p *Problem, rules rules, a *Matrix, b []float64) error {
	nt, ld := s.Mesh.NumTriangles(), s.LocalDOFs()
	workers := max(1, min(runtime.GOMAXPROCS(0), (nt+block-1)/block))
	ke := make([]float64, block*ld*ld)
	fe := make([]float64, block*ld)
	work := make([]*elementWork, workers)
	for w := range work {
		work[w] = newElementWork(ld)
	}
	errs := make([]error, workers)
	dofs := make([]int32, 0, 6)
	for k0 := 0; k0 < nt; k0 += block {
		k1 := min(k0+block, nt)
		var wg sync.WaitGroup
		chunk := (k1 - k0 + workers - 1) / workers
		for w := range workers {
			lo, hi := k0+w*chunk, min(k0+(w+1)*chunk, k1)
			if lo >= hi {
				continue
			}
			wg.Add(1)
			go func() {
				defer wg.Done()
				for k := lo; k < hi; k++ {
					off := k - k0
					if err := element(s, p, rules, work[w], k, ke[off*ld*ld:(off+1)*ld*ld], fe[off*ld:(off+1)*ld]); err != nil {
						errs[w] = err
						return
					}
				}
			}()
		}
		wg.Wait()
		for _, err := range errs { // the first worker's error is the lowest triangle's
			if err != nil {
				return err
			}
		}
		for k := k0; k < k1; k++ {
			off := k - k0
			dofs = s.ElementDOFs(dofs, k)
			kl := ke[off*ld*ld : (off+1)*ld*ld]
			for i, di := range dofs {
				b[di] += fe[off*ld+i]
				row := a.Col[a.RowPtr[di]:a.RowPtr[di+1]]
				base := int(a.RowPtr[di])
				for j, dj := range dofs {
					a.Val[base+search(row, dj)] += kl[i*ld+j]
				}
			}
		}
	}
	return nil
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
	}
	for q := range r.stiff.Len() {
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
	if p.F != nil {
		for q := range r.load.Len() {
			l := [3]float64{r.load.Bary[3*q], r.load.Bary[3*q+1], r.load.Bary[3*q+2]}
			x, y := g.point(l)
			f := p.F(x, y)
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
	if p.F == nil {
		return nil
	}
	for q := range r.load.Len() {
		l := [3]float64{r.load.Bary[3*q], r.load.Bary[3*q+1], r.load.Bary[3*q+2]}
		x, y := g.point(l)
		f := p.F(x, y)
		if math.IsNaN(f) || math.IsInf(f, 0) {
			return atTriangle(k, x, y, fmt.Errorf("%w: source f = %g", ErrNotFinite, f))
		}
		wq := f * r.load.W[q] * g.area
		fe[0] += wq * l[0]
		fe[1] += wq * l[1]
		fe[2] += wq * l[2]
	}
	return nil
}
