// Package amg is an algebraic multigrid preconditioner for the conjugate
// gradient method of package sparse: smoothed aggregation (Vaněk, Mandel
// and Brezina 1996) for the symmetric positive definite matrices of P1 and
// P2 Lagrange elements on uniform or adaptively refined triangle meshes,
// sized for 10⁶–2·10⁶ unknowns on a small multi-core machine.
//
// Use:
//
//	h, err := amg.New(sys.A, amg.Settings{}) // once per matrix
//	...
//	res, err := sparse.CG(sys.A, sys.B, x, h, sparse.CGSettings{Tol: 1e-8})
//
// New builds a hierarchy of matrices A₀ = A, A₁, …, A_L with prolongators
// P_l from level l+1 to level l; Hierarchy.Apply is one V-cycle.
//
// # Strength of connection and aggregation
//
// On a level with matrix A, the off-diagonal entry a_ij is a strong
// connection when
//
//	|a_ij| ≥ θ √(a_ii a_jj)        (θ = Settings.Theta, default 0.08).
//
// The nodes are partitioned into aggregates by the greedy algorithm of
// Vaněk, Mandel and Brezina on the graph of strong connections, visiting
// the nodes in ascending order (so the result is deterministic):
//
//  1. a free node with at least one strong neighbour, all of whose strong
//     neighbours are free, forms a new aggregate with them;
//  2. each remaining node joins the aggregate of pass 1 to which it has
//     the strongest connection;
//  3. what is still left forms new aggregates with its free strong
//     neighbours.
//
// The Dirichlet rows of fem.Assemble are identity rows: their off-diagonal
// entries are (explicit) zeros, so these nodes have no strong connection.
// Such decoupled nodes are left out of the coarse space: their rows of the
// prolongator are zero. This is exact, because the smoother solves a
// decoupled row exactly (Gauss–Seidel) or damps it like any other mode
// (Chebyshev), and it keeps the coarse levels free of the O(√n) boundary
// nodes, which as singleton aggregates would never coarsen. A node that
// has nonzero off-diagonal entries but none of them strong (possible for
// large θ) is not left out but joins, in pass 2, the aggregate of its
// largest connection: θ bounds each connection, not their sum, so such a
// node is not necessarily damped by the smoother, and dropping it was
// measured to cost hundreds of CG iterations at θ = 0.18 on P2 matrices.
//
// # Prolongator
//
// The tentative prolongator P̂ holds the near null space of a scalar
// diffusion operator, the constants, piecewise on the aggregates:
// P̂_{i,J} = 1 if node i is in aggregate J, else 0. It is smoothed by one
// damped Jacobi step with the filtered matrix A_F,
//
//	P = (I − ω D⁻¹ A_F) P̂,   D = diag(A),   ω = 4 / (3 ρ),
//
// where A_F keeps the diagonal and the strong entries of A and adds the
// weak ones to the diagonal, a^F_ii = a_ii + Σ_{j weak} a_ij, so that A_F
// has the row sums of A: where A 1 = 0, also P 1 = 1. ρ estimates the
// spectral radius of D⁻¹A_F by six steps of the power method (its
// Rayleigh quotient, a lower bound); the Gershgorin bound
// max_i Σ_j |a^F_ij| / a_ii, used before, is 2 where the estimate is
// 1.2–1.5 on the coarse levels of the test problems, and the too small ω
// it gives raised the CG iterations at 10⁶ unknowns from 16 to 22.
//
// # Coarse operators
//
// The coarse matrix is the Galerkin product A_c = Pᵀ A P, computed as
// R (A P) with R = Pᵀ stored explicitly. The sparse products use
// Gustavson's row-wise algorithm with a dense accumulator and a marker
// array (no hash maps), in a symbolic pass that counts each row and a
// numeric pass that writes it, sorted, straight into the result; rows are
// split over goroutines. Floating point makes R (A P) symmetric only to
// rounding, so it is replaced by (A_c + A_cᵀ)/2 in place, which is exactly
// symmetric. The coarsening stops at the first level with at most
// Settings.CoarseSize unknowns (default 300), after Settings.MaxLevels
// levels (default 20), or when a level has only decoupled nodes.
//
// The coarsest level is solved exactly by a dense Cholesky factorisation
// (if it has at most 2000 unknowns; a larger last level, left by MaxLevels
// or a large CoarseSize, is only smoothed). The coarsest matrix is
// singular only for a pure Neumann problem, whose constants span the null
// space of every level. A pivot s ≤ 10⁻¹⁰ a_ii is then treated as zero
// and its unknown fixed at zero, which gives a symmetric generalised
// inverse that solves every consistent system exactly; a clearly negative
// pivot (an indefinite matrix) is an error.
//
// # V-cycle
//
// Apply(dst, r) computes dst = M⁻¹r by the V-cycle from x = 0 on level 0,
// recursively, with b = r:
//
//	x ← S(x, b)             ν pre-smoothing steps (from x = 0)
//	b_c ← R (b − A x)        restriction of the residual
//	x_c ← V-cycle(A_c, b_c)  or the exact solve on the coarsest level
//	x ← x + P x_c            coarse grid correction
//	x ← S*(x, b)            ν post-smoothing steps
//
// (ν = Settings.Smoothing, default 1). If the post-smoother S* is the
// adjoint of the pre-smoother S in the A inner product and the coarsest
// solve is symmetric, M⁻¹ is symmetric, and positive definite, as CG
// requires. Two smoothers are provided:
//
//   - GaussSeidel (the default): forward Gauss–Seidel sweeps before,
//     backward sweeps after; the backward sweep is the adjoint of the
//     forward one for symmetric A. The first sweep from x = 0 reads only
//     the lower triangle, and the residual after it is −Σ_{j>i} a_ij x_j,
//     the upper triangle only. Gauss–Seidel is sequential.
//   - Chebyshev: the Chebyshev polynomial of degree ν in D⁻¹A for the
//     interval [λ/30, λ], λ = 1.1 × the power-method estimate of
//     λ_max(D⁻¹A), before and after (the polynomial is self-adjoint, so
//     the same one serves both). Its steps are fused row-parallel
//     products.
//
// Measured on the P1 Laplacian with 10⁶ unknowns on an otherwise idle
// two-core machine (CG to relative residual 1e-8 from zero; costs in
// units of one product with the fine matrix by the parallel MulVec, timed
// in the same run; see BenchmarkSolve), symmetric Gauss–Seidel with one
// sweep is the cheapest. It needs more iterations than the alternatives,
// but each V-cycle costs less: Gauss–Seidel, although it runs on one
// core, reduces the error far more per pass over the matrix than a
// polynomial step, and the passes are limited by memory bandwidth more
// than by the core count.
//
//	smoother          V-cycle   iterations   CG solve
//	Gauss–Seidel ν=1    7.8         16          161
//	Gauss–Seidel ν=2   13.4         13          208
//	Chebyshev ν=2       8.6         17          185
//	Chebyshev ν=3      10.7         14          187
//
// (With the second core busy with another process the ratios were 4.9,
// 8.2, 8.0 and 11.1 for the V-cycle and 101, 126, 157 and 180 for the
// solve: the same order.) A parallel variant of Gauss–Seidel was tried
// too: ℓ1 block Gauss–Seidel (Baker, Falgout, Kolev and Yang 2011) with
// fixed blocks of 32768 rows, so that results do not depend on
// GOMAXPROCS. It cut the P1 V-cycle to 6.6 and the solve to 136, but the
// DOF numbering of FEM spaces (P2 edge unknowns after all vertices,
// vertices of refined meshes appended) couples many rows across blocks,
// and it cost 2–5 more iterations on P2 and graded meshes (29 instead of
// 24 for P2 at 10⁶ unknowns, solve about 200 instead of 170–185), so it was
// dropped.
//
// Setup costs about 75 products (P1) or 60 (P2) at 10⁶ unknowns, and
// everything in New and Apply is linear in the size of the matrix.
//
// The default θ = 0.08 is that of Vaněk, Mandel and Brezina. For P2
// elements on meshes of right isosceles triangles (mesh.Rectangle and
// its refinements) the positive vertex–vertex couplings have strength
// about 0.083, just above it; θ = 0.1 leaves them weak and was measured
// to save 15–25% of the CG iterations for P2 (and nothing for P1).
//
// # Determinism, allocation and concurrency
//
// Results are bit-identical whatever GOMAXPROCS is: every row of a product
// or of a parallel V-cycle step is computed by one goroutine in a fixed
// order, Gauss–Seidel and the inner products of the power method are
// sequential, and aggregation is sequential. Apply allocates nothing: the
// work vectors of all levels are allocated by New, and the goroutines of
// the parallel steps (rows split over up to GOMAXPROCS goroutines above
// 20000 rows, as in sparse.CSR.MulVec) are started from closures built
// once. Apply uses these work vectors, so a Hierarchy must not be used by
// several goroutines at once; build one per goroutine instead.
//
// Errors of New wrap the sentinel errors of package sparse (ErrDims,
// ErrStructure, ErrIndex, ErrNotFinite, ErrNotPositive, ErrSettings), for
// errors.Is; messages start with "amg:". Apply panics on vectors of the
// wrong length, a programmer error.
//
// # References
//
//   - P. Vaněk, J. Mandel and M. Brezina, Algebraic multigrid by smoothed
//     aggregation for second and fourth order elliptic problems,
//     Computing 56 (1996) 179–196.
//   - F. G. Gustavson, Two fast algorithms for sparse matrices:
//     multiplication and permuted transposition, ACM Trans. Math.
//     Software 4 (1978) 250–269.
//   - Y. Saad, Iterative Methods for Sparse Linear Systems, 2nd ed., SIAM,
//     2003 (§9.2 preconditioned CG, §12.1 Chebyshev iteration, chapter 13
//     multigrid).
//   - W. Hackbusch, Multi-Grid Methods and Applications, Springer, 1985.
//   - A. H. Baker, R. D. Falgout, T. V. Kolev and U. M. Yang, Multigrid
//     smoothers for ultraparallel computing, SIAM J. Sci. Comput. 33
//     (2011) 2864–2887.
package amg
