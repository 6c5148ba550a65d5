package estimate

import (
	"cmp"
	"fmt"
	"math"
	"slices"

	"gonum.org/v1/gonum/blas"
	"gonum.org/v1/gonum/blas/blas64"
	"gonum.org/v1/gonum/lapack/lapack64"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/internal/sparse"
	"github.com/posteriori-fem/posteriori/mesh"
)

// FluxRecovery is the flux recovery estimator of Cai and Zhang: the
// numerical flux −a∇u_h of a P_p solution (p = 1, 2) is projected onto the
// Raviart–Thomas space RT_k, k = p − 1, in the a^{−1}-weighted L² product,
//
//	σ ∈ RT_k:  (a^{−1} σ, τ) = (−∇u_h, τ)  for all τ ∈ RT_k with τ·n = 0 on Γ_N,
//	           σ·n = −Π_k g_N  on Γ_N,
//
// so that σ minimises ‖a^{−½}(σ + a∇u_h)‖ over the fields of RT_k with that
// normal trace, and
//
//	η_T = ‖a^{−½}(σ + a∇u_h)‖_T.
//
// Unlike a gradient recovered in a Lagrange space, σ is only required to
// have a continuous normal component, as the exact flux −a∇u has, and not
// continuous tangential components, which the exact flux does not have
// across a jump of a: the estimator does not see the jump of ∇u at an
// interface as an error, and its reliability and efficiency constants do
// not depend on the contrast of a (Cai and Zhang 2009, RT_0 recovery of P1
// solutions; Cai, He and Zhang 2017, full tensors a and RT_0 and RT_1
// recoveries of P1 solutions, as their abstract states). The use of
// RT_{p−1} for P2 is ours: it is the smallest RT space that holds −a∇u_h,
// so the patch test holds. Cai, He and Zhang also add an element residual
// of σ, h_T a_T^{−½} ‖f − ∇·σ‖_T (from memory), which this estimator leaves
// out.
//
// Measured effectivity η/‖a^½∇(u − u_h)‖ (TestFluxKellogg, adaptive
// Dörfler θ = 0.5 runs on the Kellogg checkerboard, contrast 161): P1
// 0.57–0.65 over 60 steps to 8,500 DOFs, P2 0.43–0.53 over 60 steps to
// 1,100 DOFs (gradient recovery: 0.29–0.43); on the smooth sine problem
// under uniform refinement 1.11–1.15 (P1) and 0.84 (P2).
//
// Boundary: on the Neumann edges (tagged in Problem.Neumann, and the
// untagged edges, where g_N = 0) the normal component is fixed, σ·n =
// −Π_k g_N, the L² projection of the data onto P_k of the edge, as in the
// space of Cai and Zhang 2009 (from memory): the recovered flux then
// satisfies the boundary condition of the exact flux, and η sees where u_h
// does not. On the Robin edges it is fixed likewise to −Π_k(g_R − α u_h),
// the flux that the Robin condition gives for u_h. On the Dirichlet edges
// σ·n is free.
//
// Solver: the projection is a weighted mass matrix system in RT_k (one
// unknown per edge for P1, two per edge and two per triangle for P2),
// assembled as a sparse matrix and solved by Jacobi-preconditioned
// conjugate gradients (sparse.CG) from a local guess: on each edge the
// normal moments of −a∇u_h of the two triangles, averaged with the weights
// of the diagonal of their element matrices (which, as a^{−1} appears in
// them, favour the side with the smaller a), and inside each triangle those
// of −a∇u_h. With Jacobi scaling the condition number of the system is
// bounded by that of the scaled element matrices, whatever the contrast of
// a. The estimate is the minimum of a quadratic: for an iterate σ_j,
//
//	‖a^{−½}(σ_j + a∇u_h)‖² = η² + ‖a^{−½}(σ_j − σ)‖²,
//
// so a relative algebraic error ε = ‖a^{−½}(σ_j − σ)‖/η raises the total
// by about ε²/2 (the indicators η_T change by up to about ε). CG stops when
// its estimate of ‖a^{−½}(σ_j − σ)‖ (the delayed Hestenes–Stiefel sum of
// sparse.CGSettings.EnergyTol, a lower bound, from the fourth iteration on)
// is at most Tol times the η of the local guess, Tol = 1e-2 by default, or
// at the relative residual 1e-10. Measured against a solve to the relative
// residual 1e-10 (the tests): the default changes the total by at most
// 2e-8 relative on adaptive Kellogg meshes (P1 and P2), well inside the
// Tol²/2 = 5e-5 the rule allows (4 to 7 iterations in
// BenchmarkFluxRecovery).
//
// η_T is computed as δᵀ A_T δ, with A_T the element matrix and δ the
// coefficients of σ + a∇u_h on T (−a∇u_h is in RT_k(T) for
// piecewise-constant a). The element data are integrated in closed form
// for P1 and by the Dunavant rule of degree 2k + 2 (exact) for P2.
//
// Cost, measured (BenchmarkFluxRecovery, the sine problem, uniform meshes,
// a two-core machine, three runs of go test -run XXX -bench
// 'FluxRecovery/(P1|spmv)/n=(100000|1000000)$' -benchtime 4x, timing
// calls that reuse dst's scratch, as the adaptive loop does): P1 189–196
// ns per triangle at 1e6 triangles (median 193: about 100 products with
// the P1 stiffness matrix of the same mesh, which took 1.92–1.94 ns per
// triangle in these runs, median 1.93; in an earlier set of runs the
// product took 2.68–2.98), and 234–264 at 1e5 (median 237), 5 CG
// iterations; P2 6,354 ns per triangle at 1e4 (one run of an earlier
// version, -benchtime 1x, timing the first call). The P1 path
// assembles the system, its diagonal and the local guess in one pass over
// the edges, from the two triangles of each edge (flux_p1.go). The source f
// at six points per triangle for the oscillation is about a fifth of the
// P1 time; the rest is the element pass, the assembly, CG (4–7 iterations
// plus two residual products) and the indicators. Memory: 311 bytes per
// triangle for P1 (element data, matrix, the sides of the edges, the
// diagonal and CG's vectors) and 1,604 for P2, allocated by the first call
// with a dst (-benchtime 1x, 100352 and 10082 triangles) and kept in its
// scratch; a dst used again allocates about 6 kB per call (5672 B/op at
// 1e5 triangles, -benchmem).
//
// The data oscillation is computed as by Residual and Osc2 holds it, by the
// package convention. The reaction term c u is not part of the flux: with
// c > 0 the estimator measures ‖a^½∇(u − u_h)‖ only.
//
// This estimator is not a guaranteed bound of the error: it is reliable and
// efficient up to unknown constants (and higher-order terms); use
// Equilibrated where a certified number is needed. Like every estimator
// here it measures the discretization error of the stated model problem,
// nothing about whether the model describes the physical system.
//
// Diffusion given by AFunc is not supported and returns an error wrapping
// ErrUnsupported; a negative or NaN Tol, or Tol ≥ 1, is an error wrapping
// ErrArgument.
//
// References:
//   - Z. Cai and S. Zhang, Recovery-based error estimators for interface
//     problems: conforming linear elements, SIAM J. Numer. Anal. 47 (2009)
//     2132–2156.
//   - Z. Cai, C. He and S. Zhang, Improved ZZ a posteriori error estimators
//     for diffusion problems: conforming linear elements, Comput. Methods
//     Appl. Mech. Engrg. 313 (2017) 433–449 (arXiv:1508.00191).
type FluxRecovery struct {
	// Tol is the relative algebraic error at which the solve of the
	// projection stops (see FluxRecovery); zero means 1e-2.
	Tol float64

	general bool // test hook: use the general element path for P1 too
}

var _ Estimator = FluxRecovery{}

// defaultFluxTol is the default of FluxRecovery.Tol.
const defaultFluxTol = 1e-2

// fluxCGTol is the relative residual at which CG stops if the energy test
// has not stopped it before.
const fluxCGTol = 1e-10

// Estimate computes the flux recovery indicators and the data oscillation.
func (fr FluxRecovery) Estimate(dst *Indicators, u *fem.Function, p *fem.Problem) (*Indicators, error) {
	if !(fr.Tol >= 0 && fr.Tol < 1) {
		return nil, fmt.Errorf("estimate: FluxRecovery: Tol = %g, want 0 (default) or a value in (0, 1): %w", fr.Tol, ErrArgument)
	}
	return estimateBy("FluxRecovery", dst, u, p, fr.run)
}

// FluxStats reports the solve of the last projection of a Flux call.
type FluxStats struct {
	Unknowns   int     // unknowns of the projection (fixed Neumann moments included)
	Iterations int     // CG iterations
	Guess      float64 // η of the local guess
}

// projection holds the system of one flux recovery.
type projection struct {
	u     *fem.Function
	p     *fem.Problem
	m     *mesh.Mesh
	rt    *fem.RTSpace
	k     int // degree of the RT space
	nloc  int
	n     int // unknowns
	rtab  *fem.RegionTable
	fixed []int32   // per edge: 1 if its normal moments are fixed (Neumann edge), else 0
	loc   []float64 // per triangle: the element matrix (nloc²) and right-hand side (nloc)
	b, x  []float64
	a     *sparse.CSR
	diag  []float64 // the diagonal of a, for the Jacobi preconditioner
	cg    []float64 // CG's work vectors (4n)
	// local writes ‖a^{−½}(σ + a∇u_h)‖²_T per triangle (localGeneral,
	// localP1).
	local func(eta2 []float64)
}

// run is the path of Estimate, after prepare.
func (fr FluxRecovery) run(dst *Indicators, u *fem.Function, p *fem.Problem) error {
	pr, _, err := fr.project(dst, u, p)
	if err != nil {
		return err
	}
	pr.local(dst.Eta2)
	return nil
}

// Flux returns the recovered flux σ ∈ RT_{p−1} of u (see FluxRecovery)
// and the statistics of its solve.
func (fr FluxRecovery) Flux(u *fem.Function, p *fem.Problem) (*fem.RTFunction, FluxStats, error) {
	if !(fr.Tol >= 0 && fr.Tol < 1) {
		return nil, FluxStats{}, fmt.Errorf("estimate: FluxRecovery: Tol = %g, want 0 (default) or a value in (0, 1): %w", fr.Tol, ErrArgument)
	}
	dst, err := prepare("FluxRecovery", nil, u, p)
	if err != nil {
		return nil, FluxStats{}, err
	}
	pr, st, err := fr.project(dst, u, p)
	if err != nil {
		return nil, FluxStats{}, err
	}
	return &fem.RTFunction{Space: pr.rt, U: slices.Clone(pr.x)}, st, nil
}

// project assembles and solves the projection, with the scratch of dst.
func (fr FluxRecovery) project(dst *Indicators, u *fem.Function, p *fem.Problem) (*projection, FluxStats, error) {
	pr, err := fr.system(dst, u, p)
	if err != nil {
		return nil, FluxStats{}, err
	}
	st := FluxStats{Unknowns: pr.n, Guess: math.Sqrt(pr.energy(dst.Eta2))}
	tol := fr.Tol
	if tol == 0 {
		tol = defaultFluxTol
	}
	jac, err := sparse.NewJacobiDiag(pr.diag)
	if err != nil {
		return nil, FluxStats{}, fmt.Errorf("estimate: FluxRecovery: %w", err)
	}
	res, err := sparse.CG(pr.a, pr.b, pr.x, jac, sparse.CGSettings{Tol: fluxCGTol, EnergyTol: tol * st.Guess, MaxIter: 1000 + pr.n/10, Work: pr.cg})
	st.Iterations = res.Iterations
	if err != nil {
		return nil, FluxStats{}, fmt.Errorf("estimate: FluxRecovery: projection: %w", err)
	}
	return pr, st, nil
}

// system assembles the projection's system, with the local guess in x and
// the fixed Neumann moments, in the scratch of dst.
func (fr FluxRecovery) system(dst *Indicators, u *fem.Function, p *fem.Problem) (*projection, error) {
	if !p.PiecewiseConstant() {
		return nil, fmt.Errorf("estimate: FluxRecovery: diffusion given by AFunc: %w", ErrUnsupported)
	}
	m := u.Space.Mesh
	k := u.Space.Degree - 1
	rt, err := fem.NewRTSpace(m, k)
	if err != nil {
		return nil, err
	}
	pr := &projection{u: u, p: p, m: m, rt: rt, k: k, nloc: rt.LocalDOFs(), n: rt.NumDOF(), rtab: fem.NewRegionTable(p)}
	nt, ne := m.NumTriangles(), m.NumEdges()
	nl := pr.nloc
	// Scratch: element data; b, x, the diagonal and CG's four work
	// vectors; the values of the matrix.
	rowLen := 2*nl - (k + 1)
	nnzMax := ne*(k+1)*rowLen + nt*rt.InteriorDOFs()*nl
	work := dst.scratch(nt*(nl*nl+nl) + 7*pr.n + nnzMax)
	pr.loc, work = work[:nt*(nl*nl+nl)], work[nt*(nl*nl+nl):]
	pr.b, pr.x, pr.diag = work[:pr.n], work[pr.n:2*pr.n], work[2*pr.n:3*pr.n]
	pr.cg, work = work[3*pr.n:7*pr.n], work[7*pr.n:]
	vals := work
	fast := k == 0 && !fr.general
	nside := 0
	if fast {
		nside = 2 * ne
	}
	iw := dst.scratchInt(ne + pr.n + 1 + nnzMax + nside)
	pr.fixed = iw[:ne]
	rowPtr := iw[ne : ne+pr.n+1]
	cols := iw[ne+pr.n+1 : ne+pr.n+1+nnzMax]
	sides := iw[ne+pr.n+1+nnzMax:]
	for e := range ne {
		pr.fixed[e] = 0
		if m.IsBoundary(e) {
			if _, ok := p.Dirichlet[m.EdgeTag[e]]; !ok {
				pr.fixed[e] = 1
			}
		}
	}
	// Fast path for P1 (RT_0, flux_p1.go): the element data in closed form,
	// the system from the two sides of each edge. Otherwise the general
	// path: element data by quadrature, rows gathered and sorted.
	if fast {
		if err := pr.elementsP1(dst); err != nil {
			return nil, err
		}
		if err := pr.neumann(); err != nil {
			return nil, err
		}
		pr.assembleP1(rowPtr, cols, vals, sides)
		pr.local = pr.localP1
	} else {
		if err := pr.elements(dst); err != nil {
			return nil, err
		}
		if err := pr.neumann(); err != nil {
			return nil, err
		}
		pr.assemble(rowPtr, cols, vals)
		pr.guess()
		pr.local = pr.localGeneral
	}
	return pr, nil
}

// invTensor returns a⁻¹.
func invTensor(a fem.Tensor) fem.Tensor {
	d := a.XX*a.YY - a.XY*a.XY
	return fem.Tensor{XX: a.YY / d, XY: -a.XY / d, YY: a.XX / d}
}

// elements computes, per triangle, the element matrix A_T = (a⁻¹ φ_i, φ_j)_T
// in local DOF order with the signs of the global basis, and the
// coefficients c_T of −a∇u_h on T, the solution of A_T c_T = −(∇u_h, φ_i)_T
// (exact: −a∇u_h ∈ P_k² ⊂ RT_k(T)), by the Dunavant rule of degree 2k + 2
// (exact) and a Cholesky factorisation; and the data oscillation into
// dst.Osc2.
func (pr *projection) elements(dst *Indicators) error {
	m, p, k, nl := pr.m, pr.p, pr.k, pr.nloc
	rule, err := quadrature.ForTriangle(2*k + 2)
	if err != nil {
		return err
	}
	orule, err := quadrature.ForTriangle(2*k + 4)
	if err != nil {
		return err
	}
	return parallel.For(m.NumTriangles(), 256, func(lo, hi int) error {
		ev := fem.NewEvaluator(pr.u)
		el := pr.rt.NewElement()
		var phi [15][2]float64
		var fq [quadrature.MaxTrianglePoints]float64
		var fac [15 * 15]float64
		for t := lo; t < hi; t++ {
			ev.Load(t)
			el.Load(t)
			ai := invTensor(pr.rtab.At(m.Region[t]))
			loc := pr.loc[t*(nl*nl+nl) : (t+1)*(nl*nl+nl)]
			clear(loc)
			area := ev.Area()
			for q := range rule.Len() {
				l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
				el.Basis(l, phi[:nl])
				_, gx, gy := ev.Eval(l)
				w := rule.W[q] * area
				for i := range nl {
					vx, vy := ai.Apply(phi[i][0], phi[i][1])
					for j := range nl {
						loc[i*nl+j] += w * (vx*phi[j][0] + vy*phi[j][1])
					}
					loc[nl*nl+i] -= w * (gx*phi[i][0] + gy*phi[i][1])
				}
			}
			copy(fac[:nl*nl], loc[:nl*nl])
			if _, ok := lapack64.Potrf(blas64.Symmetric{Uplo: blas.Upper, N: nl, Stride: nl, Data: fac[:nl*nl]}); !ok {
				panic("estimate: element matrix of RT not positive definite") // broken invariant
			}
			lapack64.Potrs(blas64.Triangular{Uplo: blas.Upper, Diag: blas.NonUnit, N: nl, Stride: nl, Data: fac[:nl*nl]},
				blas64.General{Rows: nl, Cols: 1, Stride: 1, Data: loc[nl*nl:]})
			if !p.HasSource() {
				zero(dst.Osc2, t)
				continue
			}
			for q := range orule.Len() {
				x, y := ev.Point([3]float64{orule.Bary[3*q], orule.Bary[3*q+1], orule.Bary[3*q+2]})
				fq[q] = p.Source(x, y, ev.Region())
				if math.IsNaN(fq[q]) || math.IsInf(fq[q], 0) {
					return fmt.Errorf("estimate: FluxRecovery: triangle %d at (%g, %g): source f = %g: %w", t, x, y, fq[q], ErrNotFinite)
				}
			}
			h := m.Diameter(t)
			dst.Osc2[t] = h * h * oscillation(ev, orule, fq[:orule.Len()])
		}
		return nil
	})
}

// neumann sets the fixed normal moments of the Neumann and Robin edges into
// x: −s ∫_E g L_j ds, with g the prescribed flux (g_N, or g_R − α u_h) and
// s = ±1 the orientation of n_E against the outward normal.
func (pr *projection) neumann() error {
	m, k := pr.m, pr.k
	line, err := quadrature.ForLine(2*k + 4)
	if err != nil {
		return err
	}
	for e := range m.NumEdges() {
		if pr.fixed[e] == 0 {
			continue
		}
		xe := pr.x[e*(k+1) : (e+1)*(k+1)]
		clear(xe)
		tag := m.EdgeTag[e]
		if !pr.p.HasBoundaryData(tag) {
			continue
		}
		t := int(m.EdgeTri[2*e])
		s := pr.rt.Sign(t, localEdge(m, t, e))
		ax, ay := m.Vertex(int(m.Edge[2*e]))
		bx, by := m.Vertex(int(m.Edge[2*e+1]))
		le := math.Hypot(bx-ax, by-ay)
		for g, tq := range line.X {
			x, y := ax+tq*(bx-ax), ay+tq*(by-ay)
			v, _, err := pr.p.BoundaryFlux(tag, x, y, pr.u.EdgeValue(e, tq))
			if err != nil {
				return fmt.Errorf("estimate: FluxRecovery: %w", err)
			}
			for j := range k + 1 {
				xe[j] -= s * line.W[g] * le * v * quadrature.Legendre01(j, tq)
			}
		}
	}
	return nil
}

// dofs fills d with the global DOFs of triangle t in local order.
func (pr *projection) dofs(t int, d []int32) {
	m, k := pr.m, pr.k
	p := 0
	for i := range 3 {
		e := m.TriEdge[3*t+i]
		for j := range k + 1 {
			d[p] = e*int32(k+1) + int32(j)
			p++
		}
	}
	ni := pr.rt.InteriorDOFs()
	base := int32(m.NumEdges()*(k+1) + t*ni)
	for i := range ni {
		d[p] = base + int32(i)
		p++
	}
}

// isFixed reports whether DOF d is a fixed Neumann moment.
func (pr *projection) isFixed(d int32) bool {
	e := int(d) / (pr.k + 1)
	return e < len(pr.fixed) && pr.fixed[e] != 0
}

// entry is a matrix entry of a row being assembled.
type entry struct {
	col int32
	val float64
}

// rowOf gathers the entries of row r (local DOF li of triangle t1, and of
// t2 if t2 ≥ 0), moves the fixed columns to the right-hand side and sorts
// the rest by column, summing duplicates in the order t1, t2. It returns
// the entries and the right-hand side.
func (pr *projection) rowOf(r int32, t1, li1, t2, li2 int, buf []entry) ([]entry, float64) {
	nl := pr.nloc
	var d [15]int32
	rhs := 0.0
	buf = buf[:0]
	add := func(t, li int) {
		loc := pr.loc[t*(nl*nl+nl) : (t+1)*(nl*nl+nl)]
		pr.dofs(t, d[:nl])
		for j, c := range d[:nl] {
			v := loc[li*nl+j]
			rhs += v * loc[nl*nl+j]
			if c != r && pr.isFixed(c) {
				rhs -= v * pr.x[c]
				continue
			}
			buf = append(buf, entry{c, v})
		}
	}
	add(t1, li1)
	if t2 >= 0 {
		add(t2, li2)
	}
	slices.SortStableFunc(buf, func(a, b entry) int { return cmp.Compare(a.col, b.col) })
	out := buf[:0]
	for _, en := range buf {
		if n := len(out); n > 0 && out[n-1].col == en.col {
			out[n-1].val += en.val
			continue
		}
		out = append(out, en)
	}
	return out, rhs
}

// rowTriangles returns the triangles holding DOF r and its local index in
// each (t2 = −1 for a boundary edge or an interior DOF).
func (pr *projection) rowTriangles(r int) (t1, li1, t2, li2 int) {
	m, k := pr.m, pr.k
	ne := m.NumEdges()
	if r < ne*(k+1) {
		e, j := r/(k+1), r%(k+1)
		t1 = int(m.EdgeTri[2*e])
		li1 = localEdge(m, t1, e)*(k+1) + j
		t2, li2 = int(m.EdgeTri[2*e+1]), -1
		if t2 >= 0 {
			li2 = localEdge(m, t2, e)*(k+1) + j
		}
		return t1, li1, t2, li2
	}
	ni := pr.rt.InteriorDOFs()
	i := r - ne*(k+1)
	return i / ni, 3*(k+1) + i%ni, -1, -1
}

// freeCols returns the number of columns of a row that triangle t adds:
// its free DOFs, less those of its local edge skip (the edge of the row,
// counted once, by the first triangle), or less none if skip is 3 (a row of
// an interior DOF). For t < 0 it returns 0.
func (pr *projection) freeCols(t, skip int) int32 {
	if t < 0 {
		return 0
	}
	k := pr.k
	c := int32(pr.rt.InteriorDOFs())
	for i := range 3 {
		if i != skip && pr.fixed[pr.m.TriEdge[3*t+i]] == 0 {
			c += int32(k + 1)
		}
	}
	return c
}

// assemble builds the matrix, its diagonal and the right-hand side of the
// projection in the given arrays: rows of the fixed Neumann moments are m_ii x_i = m_ii g_i,
// and the fixed columns of the other rows move to the right-hand side.
func (pr *projection) assemble(rowPtr, cols []int32, vals []float64) {
	n := pr.n
	// Row lengths, then offsets, then the entries.
	_ = parallel.For(n, 4096, func(lo, hi int) error {
		for r := lo; r < hi; r++ {
			if pr.isFixed(int32(r)) {
				rowPtr[r+1] = 1
				continue
			}
			t1, _, t2, li2 := pr.rowTriangles(r)
			rowPtr[r+1] = pr.freeCols(t1, 3) + pr.freeCols(t2, li2/(pr.k+1))
		}
		return nil
	})
	rowPtr[0] = 0
	for r := range n {
		rowPtr[r+1] += rowPtr[r]
	}
	nnz := int(rowPtr[n])
	cols, vals = cols[:nnz], vals[:nnz]
	_ = parallel.For(n, 4096, func(lo, hi int) error {
		buf := make([]entry, 0, 2*pr.nloc)
		for r := lo; r < hi; r++ {
			t1, li1, t2, li2 := pr.rowTriangles(r)
			o := rowPtr[r]
			if pr.isFixed(int32(r)) {
				nl := pr.nloc
				d := pr.loc[t1*(nl*nl+nl)+li1*nl+li1]
				cols[o], vals[o] = int32(r), d
				pr.b[r] = d * pr.x[r]
				continue
			}
			row, rhs := pr.rowOf(int32(r), t1, li1, t2, li2, buf)
			for i, en := range row {
				cols[int(o)+i], vals[int(o)+i] = en.col, en.val
			}
			pr.b[r] = rhs
		}
		return nil
	})
	pr.a = &sparse.CSR{Rows: n, Cols: n, RowPtr: rowPtr, Col: cols, Val: vals}
	pr.a.Diagonal(pr.diag)
}

// guess sets the free unknowns of x to the local guess: inside each
// triangle the coefficients c_T of −a∇u_h, on each edge those of its
// triangles averaged with the weights of the diagonals of their element
// matrices.
func (pr *projection) guess() {
	nl := pr.nloc
	_ = parallel.For(pr.n, 4096, func(lo, hi int) error {
		for r := lo; r < hi; r++ {
			if pr.isFixed(int32(r)) {
				continue
			}
			t1, li1, t2, li2 := pr.rowTriangles(r)
			l1 := pr.loc[t1*(nl*nl+nl) : (t1+1)*(nl*nl+nl)]
			w1, c1 := l1[li1*nl+li1], l1[nl*nl+li1]
			if t2 < 0 {
				pr.x[r] = c1
				continue
			}
			l2 := pr.loc[t2*(nl*nl+nl) : (t2+1)*(nl*nl+nl)]
			w2, c2 := l2[li2*nl+li2], l2[nl*nl+li2]
			pr.x[r] = (w1*c1 + w2*c2) / (w1 + w2)
		}
		return nil
	})
}

// energy returns ‖a^{−½}(σ + a∇u_h)‖² for σ given by x, with eta2 (one
// per triangle) as scratch.
func (pr *projection) energy(eta2 []float64) float64 {
	pr.local(eta2)
	return sum(eta2)
}

// localGeneral writes ‖a^{−½}(σ + a∇u_h)‖²_T per triangle into eta2: as
// −a∇u_h is the field of RT_k(T) with coefficients c_T, σ + a∇u_h has the
// coefficients δ = x_T − c_T on T and the norm is δᵀ A_T δ.
func (pr *projection) localGeneral(eta2 []float64) {
	nl := pr.nloc
	_ = parallel.For(pr.m.NumTriangles(), 1024, func(lo, hi int) error {
		var d [15]int32
		var dl [15]float64
		for t := lo; t < hi; t++ {
			loc := pr.loc[t*(nl*nl+nl) : (t+1)*(nl*nl+nl)]
			pr.dofs(t, d[:nl])
			for i, c := range d[:nl] {
				dl[i] = pr.x[c] - loc[nl*nl+i]
			}
			s := 0.0
			for i := range nl {
				r := 0.0
				for j := range nl {
					r += loc[i*nl+j] * dl[j]
				}
				s += dl[i] * r
			}
			eta2[t] = s
		}
		return nil
	})
}
