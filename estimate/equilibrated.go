package estimate

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Equilibrated is the equilibrated-flux estimator: a guaranteed upper bound
// of the energy error of a P1 or P2 solution u_h of
//
//	−∇·(a∇u) + c u = f,  u = g_D on Γ_D,  a∇u·n = g_N on Γ_N,  a∇u·n + α u = g_R on Γ_R,
//
// with no unknown constant, for piecewise-constant a (Problem.A, any
// contrast) and c ≥ 0 (untagged boundary edges count as Neumann edges with
// g_N = 0). A Robin edge is treated as a Neumann edge with the data
// g_N = g_R − α u_h, which are known once u_h is: below, Γ_N includes the
// Robin edges with these data.
//
// The flux σ_h ∈ RT_p (p the degree of u_h) approximates −a∇u. It is the sum
// over the vertices a of the solutions of independent mixed problems on the
// patches ω_a of the triangles around a, weighted by the hat function ψ_a:
//
//	σ_a = argmin ‖a^{−½}(τ + ψ_a a∇u_h)‖_{ω_a}  over τ ∈ RT_p(ω_a) with
//	      div τ = Π_p(ψ_a (f − c u_h) − a∇u_h·∇ψ_a − ρ_a)  on each triangle,
//	      τ·n = 0 on the edges of ∂ω_a away from a,
//	      τ·n = −Π_p(ψ_a g_N) on the Neumann edges at a,
//
// with Π_p the L² projection onto P_p of each triangle or edge. ρ_a is zero
// for a vertex on a Dirichlet edge; for any other vertex it is
// r_a ψ_a / (ψ_a, 1)_{ω_a}, with r_a the residual of u_h against ψ_a,
//
//	r_a = (f − c u_h, ψ_a) + (g_N, ψ_a)_{Γ_N} − (a∇u_h, ∇ψ_a),
//
// which makes the patch problem solvable; r_a = 0 for the exact discrete
// solution, up to the difference between this estimator's quadrature and
// the assembly's. Summing, div σ_h = Π_p(f − c u_h) − ρ with
// ρ = Σ_a ρ_a, and σ_h·n = −Π_p g_N on Γ_N.
//
// The indicators are
//
//	η_T = ‖a^{−½}(σ_h + a∇u_h)‖_T + m_T ‖f − Π_p f‖_T + Σ_{E ⊂ ∂T ∩ Γ_N} C_{T,E} ‖g_N − Π_p g_N‖_E,
//	m_T = min(h_T/(π √a_T), 1/√c),   C_{T,E} = (h_T² |E| / (a_T |T|) · (1/π² + 1/π))^½,
//
// with a_T the smallest eigenvalue of a on T, and Eta2 holds
//
//	η_T² + (η_alg² + 2 η_alg η_res) ω_T² + |||w|||²_T,
//
// with η_res = (Σ η_T²)^½, η_alg the algebraic part (a bound of
// sup (ρ, φ)/|||φ|||, below), ω_T² its share on T, and w the lifting of the Dirichlet data error
// described below. Then (Σ Eta2)^½ = ((η_res + η_alg)² + |||w|||²)^½.
//
// Theorem (Prager and Synge 1947, in the patchwise form of Braess and
// Schöberl 2008 and Ern and Vohralík 2015; the Dirichlet split, the Robin
// terms and the trace constant are derived here, as sketched below). Let
// e = u − u_h and |||v|||² = ‖a^½∇v‖² + c‖v‖² + ‖α^½ v‖²_{Γ_R}, the energy
// norm of the problem. Then
//
//	|||e|||² ≤ (η_res + η_alg)² + |||w|||²
//
// for any w ∈ H¹(Ω) with w = g_D − u_h on Γ_D. Proof in brief: e = e_0 + e_1
// with e_1 the |||·|||-smallest function with the trace of e, so |||e|||² =
// |||e_0|||² + |||e_1|||² and |||e_1||| ≤ |||w|||; and for φ = e_0 ∈ H¹_D,
// Green's formula gives
//
//	|||φ|||² = (f − Π_p f + ρ, φ) − (σ_h + a∇u_h, ∇φ) + (g_N − Π_p g_N, φ)_{Γ_N},
//
// where on a Robin edge g_N = g_R − α u_h: the boundary term α(e, φ)_{Γ_R}
// of the energy product of e and φ is α(u, φ) − α(u_h, φ), and α(u, φ) =
// (g_R − a∇u·n, φ), so the Robin condition enters as a Neumann condition
// with these data, and σ_h·n = −Π_p(g_R − α u_h) there. Each term is bounded
// by a multiple of the part ‖a^½∇φ‖ (or c^½‖φ‖) of |||φ|||, which the
// boundary term only enlarges; the lifting w below vanishes on every edge
// but the Dirichlet edges, so ‖α^½ w‖_{Γ_R} = 0. The data term
// f − Π_p f has mean zero on T, so (f − Π_p f, φ)_T ≤ m_T ‖f − Π_p f‖_T
// |||φ|||_T by the Poincaré inequality ‖φ − φ_T‖_T ≤ (h_T/π) ‖∇φ‖_T on
// convex sets (Payne and Weinberger 1960; Bebendorf 2003) or by ‖φ‖_T ≤
// c^{−½} |||φ|||_T; g_N − Π_p g_N has mean zero on E, and the trace
// inequality ‖φ − φ_T‖²_E ≤ h_T² |E|/|T| (1/π² + 1/π) ‖∇φ‖²_T follows from
// Green's formula for (φ − φ_T)² and the field (x − x_E')|E|/(2|T|), x_E' the
// vertex opposite E (whose normal component is 1 on E and 0 on the other
// edges and whose divergence is |E|/|T|), and the Poincaré inequality; and
// (ρ, φ) ≤ η_alg |||φ|||.
//
// The algebraic part η_alg is the smaller of two bounds of (ρ, φ) for φ
// vanishing on Γ_D. The first is C_alg ‖ρ‖, with ω_T² = ‖ρ‖²_T/‖ρ‖².
//
// C_alg is the smaller of c^{−½} (when c > 0) and C_F/√a_min, with a_min the
// smallest eigenvalue of a and C_F a Friedrichs constant, ‖φ‖ ≤ C_F ‖∇φ‖
// on H¹_D: Friedrichs if set, else, when every boundary edge is a Dirichlet
// edge, C_F = 1/(π (1/L_x² + 1/L_y²)^½) from the bounding box L_x × L_y of the
// mesh (the first Dirichlet eigenvalue decreases as the domain grows,
// and is π²(1/L_x² + 1/L_y²) on the box). With neither, an estimate whose ρ is
// not zero has no first bound. The second needs no constant: with ρ_T the
// mean of ρ on T, an RT_0 field σ_ρ with div σ_ρ = ρ_T and σ_ρ·n = 0 on Γ_N
// carries the mass of ρ to the Dirichlet edges along a breadth-first
// spanning tree of the triangles (each triangle passes the mass of its
// subtree to its parent through their common edge), and
//
//	(ρ, φ) = −(σ_ρ, ∇φ) + Σ_T (ρ − ρ_T, φ)_T ≤ (‖a^{−½}σ_ρ‖ + (Σ_T m_T² ‖ρ − ρ_T‖²_T)^½) |||φ|||,
//
// with ω_T² the share of T in ‖a^{−½}σ_ρ‖² + Σ_T m_T² ‖ρ − ρ_T‖²_T. The
// first bound grows like |r_a| |ω_a|^{−½} on a patch of area |ω_a|, so a
// residual of rounding size on the tiny patches at a strong singularity
// makes it useless (on the adaptive Kellogg loop it exceeded η_res by
// 10⁶); the second grows like |r_a| times the length of the path to
// Γ_D. On a piece of the mesh without Dirichlet edges the tree sends the
// mass out through Robin edges of constant α > 0, at the cost
// ‖α^{−½}σ_ρ·n‖_{Γ_R} (see treeBound). The tree exists whenever every
// piece of the mesh has a Dirichlet edge or such a Robin edge, which
// Problem.Check requires when c = 0 (unless the only α > 0 is an
// AlphaFunc: then, when ρ ≠ 0, there is no bound and the estimate returns
// ErrUnsupported); when c > 0 the first bound exists. This tree construction is in the spirit of the algebraic
// error fluxes of Papež, Rüde, Vohralík and Wohlmuth (2020), which use a
// hierarchy of meshes instead of a tree.
//
// The Dirichlet lifting is w = Σ_E w_E over the Dirichlet edges E = AB of
// triangles ABC: w_E = s δ(t) with s = λ_A + λ_B, t = λ_B/s, δ(t) the data
// error g_D − u_h along E from A to B (less its linear interpolant between
// the vertices, which is zero where the data are continuous). w_E vanishes
// on AC and BC, so w ∈ H¹, and
//
//	|||w_E|||²_T = |T| ∫₀¹ |a^½(−δ ∇λ_C + δ' ((1 − t)∇λ_B − t ∇λ_A))|² dt + c |T|/2 ∫₀¹ δ² dt.
//
// Galerkin orthogonality and inexact solves: the patch problems of the
// vertices off Γ_D need r_a = 0, which the returned solution of an
// iterative solver stopped early does not have. The estimator computes
// every r_a from the given u_h and puts them into ρ, so that the bound holds
// for the u_h it is given, exact or not; η_alg (EquilibratedParts.Algebraic)
// is the part that inexact solves add.
//
// Computation: data are integrated by the Dunavant rule of degree 2p + 4 on
// triangles and the Gauss–Legendre rule of degree 2p + 4 on edges; the
// Dirichlet term by 8 Gauss–Legendre panels of 5 points per edge, with δ'
// from fourth-order central differences of g_D with step 1e-3 |E|. The bound is
// guaranteed up to these quadratures of non-polynomial data (exact for
// polynomial data of degree ≤ p). Each patch problem has one minimiser,
// computed in one of two ways that agree up to rounding (dispatch). For P1,
// in reduced form: every admissible τ is σ_p + curl ζ, with σ_p one field
// with the prescribed divergence and normal components (found by one sweep
// around the vertex) and ζ ∈ P_2(ω_a) vanishing where τ·n is prescribed,
// so the minimisation is a symmetric positive definite system of n + 1
// unknowns (at most n + 2 on the boundary) for n triangles around the vertex,
// assembled in closed form from reference-element tables through the
// contravariant Piola map and solved by Cholesky factorisation. For P2,
// from reference-element tables through the Piola map as well, with the
// six interior DOFs of each triangle eliminated in closed form (the
// constraints fix them up to one divergence-free interior field, whose
// multiple minimises the energy), which leaves a saddle-point system in
// the free edge moments and one constant multiplier per triangle, of size
// about 4n, solved by LU factorisation with partial pivoting. In general
// (P1 meshes where two pieces touch at a vertex, and the reference of the
// tests) as the whole saddle-point system of size about 15n (7n for P1)
// assembled by quadrature and solved by LU factorisation with partial
// pivoting (gonum's lapack64.Getrf). One patch per vertex, split over GOMAXPROCS
// goroutines; every value is summed in a fixed order, so the result does
// not depend on GOMAXPROCS. The cost is linear in the number of triangles
// for bounded vertex degree. Measured with BenchmarkEquilibrated (uniform
// meshes of the unit square, a two-core machine shared with other work,
// six runs: go test -run XXX -bench
// 'Equilibrated/(P1|spmv)/n=(100000|1000000)$' -benchtime 4x): P1 560–923
// ns per triangle at 1e6 triangles (median 732; about 350 products with
// the P1 stiffness matrix of the same mesh, which took 1.97–2.43 ns per
// triangle, median 2.1) and 577–889 at 1e5 (median 829); evaluating f at
// the 12 points of each triangle takes about a tenth of it; the general
// path takes some 10 times as long on P1 meshes. P2: 3.26–3.42 µs per
// triangle at 1e4 triangles (median 3.39; go test -run XXX -bench
// 'Equilibrated/P2/n=10000$' -benchtime 3x -count 3, on a two-core machine
// shared with other work), where the general path, run beside it with the
// same flags, took 37.1–38.0 (median 37.5). Memory, in float64s per
// triangle: for P1, 24 for the three patch contributions to σ_h, 14 of
// geometry and divergence data, 3 residual parts, 7 terms and 5 for the
// algebraic bound; for P2, 45, 34 of geometry and data moments, 16 values
// of f at the quadrature points, 3, 7 and 5; five int32s per triangle (the
// triangles of each vertex, and two for the algebraic bound); and 2(p+1)
// per edge and one per vertex. One Estimate with a nil dst allocates 772
// bytes per triangle for P1 (100352 triangles) and 1006 for P2 (10082
// triangles) (BenchmarkEquilibrated's alloc-B/triangle, -benchtime 1x); a
// dst used again keeps these arrays as scratch, and an Estimate into it
// allocates about 2 bytes per triangle (the flags of the Dirichlet edges
// and vertices; 2.0 B/op per triangle at 1e6).
//
// Degree of the flux: σ_h ∈ RT_p for u_h ∈ P_p (Ern and Vohralík 2015),
// because ψ_a a∇u_h ∈ P_p² lies in RT_p and not in RT_{p−1}: with RT_{p−1}
// the patch minimisation could not reproduce it and the flux term would
// not decrease with the error (the patch test in the tests needs RT_p), and
// div σ_a must match ψ_a f − a∇u_h·∇ψ_a, a polynomial of degree p for
// f ∈ P_{p−1}.
//
// Reaction: with c > 0 the bound holds (it is the same theorem), but the
// patch problems are those of pure diffusion, so the estimate is not robust
// where reaction dominates (c h_T²/a_T ≫ 1): TestEquilibratedReactionNeumann
// measures η/error 1.05–1.09 for c = 10 and 3.96, 2.24, 1.53 (P1) on
// meshes with h = 1/6, 1/12, 1/24 for c = 1e4. Smears and Vohralík
// (Simple and robust equilibrated flux a posteriori estimates for
// singularly perturbed reaction–diffusion problems, ESAIM: M2AN 54 (2020),
// arXiv:1812.06678) show that weighted patch problems are
// needed for robustness there; they are not implemented.
//
// Geometry: the domain of the theorem is the mesh's polygon, with a and c
// those of its regions. Where the mesh follows curves (mesh.Mesh.EdgeCurve,
// on the boundary or on an interface), refinement moves the polygon towards
// them, but the difference between the polygon's problem and the curved
// one is not part of the bound (see TestCurvedInterfaceRates in package
// adapt for how large it can be on a coarse polygon).
//
// Diffusion given by AFunc and pure Neumann problems without reaction (no
// Dirichlet edge, no Robin edge with α > 0, c = 0; fem.Problem.IsPureNeumann)
// are not supported and return an error wrapping ErrUnsupported.
//
// Osc2 holds the data oscillation h_T² ‖f − Π_{p−1} f‖²_T of the package
// convention.
//
// References:
//   - W. Prager and J. L. Synge, Approximations in elasticity based on the
//     concept of function space, Quart. Appl. Math. 5 (1947) 241–269.
//   - D. Braess and J. Schöberl, Equilibrated residual error estimator for
//     edge elements, Math. Comp. 77 (2008) 651–672.
//   - A. Ern and M. Vohralík, Polynomial-degree-robust a posteriori
//     estimates in a unified setting for conforming, nonconforming,
//     discontinuous Galerkin, and mixed discretizations, SIAM J. Numer.
//     Anal. 53 (2015) 1058–1081.
//   - L. E. Payne and H. F. Weinberger, An optimal Poincaré inequality for
//     convex domains, Arch. Rational Mech. Anal. 5 (1960) 286–292;
//     M. Bebendorf, A note on the Poincaré inequality for convex domains,
//     Z. Anal. Anwend. 22 (2003) 751–756.
//   - P. Jiránek, Z. Strakoš and M. Vohralík, A posteriori error estimates
//     including algebraic error and stopping criteria for iterative solvers,
//     SIAM J. Sci. Comput. 32 (2010) 1567–1590.
//   - J. Papež, U. Rüde, M. Vohralík and B. Wohlmuth, Sharp algebraic and
//     total a posteriori error bounds for h and p finite elements via a
//     multilevel approach. Recovering mass balance in any situation,
//     Comput. Methods Appl. Mech. Engrg. 371 (2020) 113243.
type Equilibrated struct {
	// Friedrichs, if positive, is a constant C_F with ‖φ‖ ≤ C_F ‖∇φ‖ for
	// every φ ∈ H¹ that vanishes on the Dirichlet edges. Zero means: taken
	// from the bounding box when every boundary edge is a Dirichlet edge,
	// else unknown.
	Friedrichs float64

	generalOnly bool // tests: skip the fast paths
}

var _ Estimator = Equilibrated{}

// EquilibratedParts holds the terms of the equilibrated bound, summed over
// the triangles.
type EquilibratedParts struct {
	Flux        float64 // (Σ_T ‖a^{−½}(σ_h + a∇u_h)‖²_T)^½
	Oscillation float64 // (Σ_T m_T² ‖f − Π_p f‖²_T)^½
	Neumann     float64 // (Σ_T (Σ_E C_{T,E} ‖g_N − Π_p g_N‖_E)²)^½
	Residual    float64 // η_res = (Σ_T η_T²)^½, η_T the sum of the three terms above
	Algebraic   float64 // η_alg, the part of inexact solves (see Equilibrated)
	Dirichlet   float64 // |||w|||, the lifting of the Dirichlet data error
	Total       float64 // ((η_res + η_alg)² + |||w|||²)^½ = (Σ Eta2)^½, the bound of |||u − u_h|||
}

// Estimate computes the equilibrated indicators (see Equilibrated).
func (q Equilibrated) Estimate(dst *Indicators, u *fem.Function, p *fem.Problem) (*Indicators, error) {
	dst, _, err := q.EstimateParts(dst, u, p)
	return dst, err
}

// EstimateParts computes the equilibrated indicators and returns the terms
// of the bound.
func (q Equilibrated) EstimateParts(dst *Indicators, u *fem.Function, p *fem.Problem) (*Indicators, EquilibratedParts, error) {
	dst, err := prepare("Equilibrated", dst, u, p)
	if err != nil {
		return nil, EquilibratedParts{}, err
	}
	eq, err := q.equilibrate(u, p, dst)
	if err != nil {
		return nil, EquilibratedParts{}, err
	}
	parts, err := eq.indicators(dst)
	if err != nil {
		return nil, EquilibratedParts{}, err
	}
	if err := finiteIndicators("Equilibrated", dst); err != nil {
		return nil, EquilibratedParts{}, err
	}
	dst.Algebraic = parts.Algebraic
	return dst, parts, nil
}

// Flux returns the equilibrated flux σ_h ∈ RT_p of u (see Equilibrated).
func (q Equilibrated) Flux(u *fem.Function, p *fem.Problem) (*fem.RTFunction, error) {
	if _, err := prepare("Equilibrated", nil, u, p); err != nil {
		return nil, err
	}
	eq, err := q.equilibrate(u, p, nil)
	if err != nil {
		return nil, err
	}
	return eq.flux(), nil
}

// equilibration holds the data of one equilibration.
type equilibration struct {
	q      Equilibrated
	u      *fem.Function
	p      *fem.Problem
	m      *mesh.Mesh
	rt     *fem.RTSpace
	k      int // degree of u_h and of the flux space
	nloc   int // local RT DOFs
	rule   *quadrature.Triangle
	line   *quadrature.Line
	fq     []float64        // f at the rule's points, per triangle
	co     *fem.RegionTable // the diffusion of each region
	dirE   []bool           // edge is a Dirichlet edge
	free   []bool           // vertex touches no Dirichlet edge
	neu    []float64        // per boundary edge: ∫_E ψ_end g_N L_j ds, end 0 = Edge[2e]; 2(k+1) per edge (not set for interior edges)
	rt3    []float64        // per triangle and local vertex i: (ψ_i (f − c u_h) − a∇u_h·∇ψ_i, 1)_T
	rtilde []float64        // per vertex: r_a / (ψ_a, 1)_{ω_a} (0 on Dirichlet vertices)
	sig    []float64        // per triangle, per local vertex slot: the local coefficients of σ_a
	vstart []int32
	vtri   []int32
	// terms writes the terms of one triangle (see termCount).
	terms  func(tw *termWork, t int, v []float64) error
	tdat   []float64 // fast path: per-triangle data (see solveP1)
	arena  []float64 // scratch from which take cuts the arrays
	iarena []int32   // scratch from which takeInt cuts the arrays
}

// take returns n float64s, not cleared: cut from the arena while it has
// room, else allocated.
func (eq *equilibration) take(n int) []float64 {
	if len(eq.arena) < n {
		return make([]float64, n)
	}
	s := eq.arena[:n:n]
	eq.arena = eq.arena[n:]
	return s
}

// takeInt returns n int32s, not cleared, as take does.
func (eq *equilibration) takeInt(n int) []int32 {
	if len(eq.iarena) < n {
		return make([]int32, n)
	}
	s := eq.iarena[:n:n]
	eq.iarena = eq.iarena[n:]
	return s
}

// equilibrate computes σ_h, taking its arrays from the scratch of dst if
// dst is not nil.
func (q Equilibrated) equilibrate(u *fem.Function, p *fem.Problem, dst *Indicators) (*equilibration, error) {
	if !p.PiecewiseConstant() {
		return nil, fmt.Errorf("estimate: Equilibrated: diffusion given by AFunc: %w", ErrUnsupported)
	}
	if p.IsPureNeumann() {
		return nil, fmt.Errorf("estimate: Equilibrated: pure Neumann problem without reaction: %w", ErrUnsupported)
	}
	if math.IsNaN(q.Friedrichs) || math.IsInf(q.Friedrichs, 0) || q.Friedrichs < 0 {
		return nil, fmt.Errorf("estimate: Equilibrated: Friedrichs = %g, want a finite value ≥ 0: %w", q.Friedrichs, ErrArgument)
	}
	s := u.Space
	m := s.Mesh
	k := s.Degree
	rt, err := fem.NewRTSpace(m, k)
	if err != nil {
		return nil, err
	}
	eq := &equilibration{q: q, u: u, p: p, m: m, rt: rt, k: k, nloc: rt.LocalDOFs()}
	if eq.rule, err = quadrature.ForTriangle(2*k + 4); err != nil {
		return nil, err
	}
	if eq.line, err = quadrature.ForLine(2*k + 4); err != nil {
		return nil, err
	}
	nt, nv, ne := m.NumTriangles(), m.NumVertices(), m.NumEdges()
	eq.co = fem.NewRegionTable(p)
	eq.dirE = make([]bool, ne)
	eq.free = make([]bool, nv)
	for i := range eq.free {
		eq.free[i] = true
	}
	for e := range ne {
		if !m.IsBoundary(e) {
			continue
		}
		if _, ok := p.Dirichlet[m.EdgeTag[e]]; ok {
			eq.dirE[e] = true
			eq.free[m.Edge[2*e]] = false
			eq.free[m.Edge[2*e+1]] = false
		}
	}
	if dst != nil {
		// Room for the arrays of either path: σ_a, the residual parts, the
		// terms, f at the rule's points or the data of solveP1, the five of
		// treeBound (sub, flux, share), r̃ and the Neumann moments;
		// and the triangles of the vertices and the two integer arrays of
		// treeBound.
		eq.arena = dst.scratch(nt*(3*eq.nloc+3+termCount+max(p1Stride, eq.rule.Len()+p2Stride)+5) + nv + 2*(k+1)*ne)
		eq.iarena = dst.scratchInt(nv + 2 + 3*nt + 2*nt)
	}
	eq.vstart, eq.vtri = m.VertexTrianglesTo(eq.takeInt(nv+2), eq.takeInt(3*nt))
	if err := eq.dispatch(); err != nil {
		return nil, err
	}
	return eq, nil
}

// dispatch solves the patch problems and sets the terms of the
// indicators, by the path that serves the equilibration.
//
// Fast paths for special cases; if none of them applies, the general but
// slower implementation:
//
//   - P1 (solveP1, equilibrated_p1.go): every patch problem is reduced to
//     a symmetric positive definite system of about n + 1 unknowns for n
//     triangles around the vertex, with closed-form element matrices from
//     reference tables; the path declines a mesh in which the triangles
//     of some vertex do not form one fan (a vertex where two pieces touch),
//     which then takes the general path.
//   - P2 (solveP2, equilibrated_p2.go): element matrices from reference
//     tables, the interior DOFs of each triangle eliminated in closed
//     form, and a system of about 4n unknowns per patch solved by LU
//     factorisation; it takes every mesh.
//   - otherwise (P1 meshes that solveP1 declines, and
//     Equilibrated.generalOnly) the general path (solveGeneral): dense
//     saddle-point systems assembled by quadrature.
func (eq *equilibration) dispatch() error {
	if eq.k == 1 && !eq.q.generalOnly {
		if err := eq.solveP1(); err != errNotFan {
			return err
		}
	}
	if eq.k == 2 && !eq.q.generalOnly {
		return eq.solveP2()
	}
	return eq.solveGeneral()
}

// solveGeneral is the general path of dispatch, and the reference against
// which the fast path is tested: the data by quadrature, and each patch
// problem as a dense saddle-point system solved by LU factorisation.
func (eq *equilibration) solveGeneral() error {
	if err := eq.triangleData(false); err != nil {
		return err
	}
	if err := eq.neumannData(); err != nil {
		return err
	}
	eq.vertexResiduals()
	eq.sig = eq.take(3 * eq.m.NumTriangles() * eq.nloc)
	eq.terms = (*termWork).triangle
	return parallel.For(eq.m.NumVertices(), 64, func(lo, hi int) error {
		w := newPatchWork(eq)
		for a := lo; a < hi; a++ {
			if err := w.solve(a); err != nil {
				return err
			}
		}
		return nil
	})
}

// triangleData evaluates f at the rule's points, the diffusion, and the
// residual contributions (g_a, 1)_T of the three vertices of each triangle;
// with p2 (the P2 path), also the data of solveP2 in eq.tdat.
func (eq *equilibration) triangleData(p2 bool) error {
	m, p, rule := eq.m, eq.p, eq.rule
	nt, nq := m.NumTriangles(), rule.Len()
	eq.fq = eq.take(nt * nq)
	eq.rt3 = eq.take(3 * nt)
	return parallel.For(nt, 256, func(lo, hi int) error {
		ev := fem.NewEvaluator(eq.u)
		var mono [6]float64
		for t := lo; t < hi; t++ {
			ev.Load(t)
			var d []float64
			if p2 {
				d = eq.tdat[p2Stride*t : p2Stride*(t+1) : p2Stride*(t+1)]
				eq.p2Geometry(ev, t, d)
			}
			cx, cy := ev.Point([3]float64{1. / 3, 1. / 3, 1. / 3})
			a := p.Diffusion(cx, cy, ev.Region())
			area := ev.Area()
			var r [3]float64
			for q := range nq {
				l := [3]float64{rule.Bary[3*q], rule.Bary[3*q+1], rule.Bary[3*q+2]}
				x, y := ev.Point(l)
				f := p.Source(x, y, ev.Region())
				if math.IsNaN(f) || math.IsInf(f, 0) {
					return fmt.Errorf("estimate: Equilibrated: triangle %d at (%g, %g): source f = %g: %w", t, x, y, f, ErrNotFinite)
				}
				eq.fq[t*nq+q] = f
				v, gx, gy := ev.Eval(l)
				fx, fy := a.Apply(gx, gy)
				w := rule.W[q] * area
				var g [3]float64
				for i := range 3 {
					bx, by := ev.BaryGrad(i)
					g[i] = w * (l[i]*(f-p.C*v) - (fx*bx + fy*by))
					r[i] += g[i]
				}
				if d != nil {
					monomials(l[1], l[2], 2, mono[:])
					for i := range 3 {
						for mm := range 6 {
							d[tdP2Gm+6*i+mm] += g[i] * mono[mm]
						}
					}
				}
			}
			eq.rt3[3*t], eq.rt3[3*t+1], eq.rt3[3*t+2] = r[0], r[1], r[2]
		}
		return nil
	})
}

// neumannEdge returns the prescribed flux of edge e as a function of the
// parameter t from A = Edge[2e] to B = Edge[2e+1] (g_N on a Neumann edge,
// g_R − α u_h on a Robin edge: fem.Problem.BoundaryFlux) and its length,
// or a nil function if e is not a Neumann edge with data or a Robin edge.
func (eq *equilibration) neumannEdge(e int) (gn func(t float64) (float64, error), le float64) {
	m := eq.m
	if !m.IsBoundary(e) || eq.dirE[e] {
		return nil, 0
	}
	tag := m.EdgeTag[e]
	if !eq.p.HasBoundaryData(tag) {
		return nil, 0
	}
	ax, ay := m.Vertex(int(m.Edge[2*e]))
	bx, by := m.Vertex(int(m.Edge[2*e+1]))
	gn = func(t float64) (float64, error) {
		x, y := ax+t*(bx-ax), ay+t*(by-ay)
		v, _, err := eq.p.BoundaryFlux(tag, x, y, eq.u.EdgeValue(e, t))
		if err != nil {
			return 0, fmt.Errorf("estimate: Equilibrated: %w", err)
		}
		return v, nil
	}
	return gn, math.Hypot(bx-ax, by-ay)
}

// neumannData integrates ∫_E ψ g_N L_j ds for the two end vertices of each
// Neumann edge, and ∫_E ψ (g_R − α u_h) L_j ds on each Robin edge.
func (eq *equilibration) neumannData() error {
	m, k := eq.m, eq.k
	// Only the entries of the boundary edges are read, and cleared.
	eq.neu = eq.take(2 * (k + 1) * m.NumEdges())
	for e := range m.NumEdges() {
		if !m.IsBoundary(e) {
			continue
		}
		clear(eq.neu[2*e*(k+1) : 2*(e+1)*(k+1)])
		gn, le := eq.neumannEdge(e)
		if gn == nil {
			continue
		}
		for g, t := range eq.line.X {
			v, err := gn(t)
			if err != nil {
				return err
			}
			w := eq.line.W[g] * le * v
			for j := range k + 1 {
				lj := quadrature.Legendre01(j, t)
				eq.neu[(2*e)*(k+1)+j] += w * (1 - t) * lj
				eq.neu[(2*e+1)*(k+1)+j] += w * t * lj
			}
		}
	}
	return nil
}

// vertexResiduals sums r_a over the patch of every vertex off Γ_D, in the
// order of the vertex's triangles, and stores r_a / (ψ_a, 1)_{ω_a}.
func (eq *equilibration) vertexResiduals() {
	m, k := eq.m, eq.k
	eq.rtilde = eq.take(m.NumVertices())
	clear(eq.rtilde)
	_ = parallel.For(m.NumVertices(), 1024, func(lo, hi int) error {
		for a := lo; a < hi; a++ {
			if !eq.free[a] {
				continue
			}
			r, area := 0.0, 0.0
			for _, t := range eq.vtri[eq.vstart[a]:eq.vstart[a+1]] {
				ia := localVertex(m, int(t), int32(a))
				r += eq.rt3[3*int(t)+ia]
				area += m.Area(int(t))
				for i := range 3 {
					e := int(m.TriEdge[3*int(t)+i])
					if i == ia || !m.IsBoundary(e) {
						continue
					}
					end := 0
					if m.Edge[2*e+1] == int32(a) {
						end = 1
					}
					r += eq.neu[(2*e+end)*(k+1)]
				}
			}
			eq.rtilde[a] = r / (area / 3)
		}
		return nil
	})
}

// flux assembles σ_h as a global field: the edge DOFs from the first
// triangle of each edge, the interior DOFs from each triangle.
func (eq *equilibration) flux() *fem.RTFunction {
	v := fem.NewRTFunction(eq.rt)
	el := eq.rt.NewElement()
	var c [15]float64
	for t := range eq.m.NumTriangles() {
		el.Load(t)
		eq.local(t, c[:eq.nloc])
		for i, d := range el.DOFs() {
			v.U[d] = c[i]
		}
	}
	return v
}

// local writes the coefficients of σ_h on triangle t (of the global basis
// functions, in local DOF order) into c: the sum of the three vertex slots.
func (eq *equilibration) local(t int, c []float64) {
	n := eq.nloc
	s := eq.sig[3*t*n : 3*(t+1)*n]
	for i := range n {
		c[i] = s[i] + s[n+i] + s[2*n+i]
	}
}
