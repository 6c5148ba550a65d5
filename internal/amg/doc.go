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
//	...
//	err = h.Reset(next.A, amg.Settings{}) // the next matrix, in h's memory
//
// New builds a hierarchy of matrices A₀ = A, A₁, …, A_L with prolongators
// P_l from level l+1 to level l; Hierarchy.Apply is one V-cycle.
// Hierarchy.Reset builds the hierarchy of another matrix, bit for bit the
// one New would build, in the arrays of the old one (see Determinism,
// allocation and concurrency).
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
// node is not necessarily damped by the smoother: dropping such nodes at
// θ = 0.18 was measured to raise the CG iterations of the test problems
// with about 10⁶ unknowns (TestIterationsBounded) from 20–45 to 214–423.
// Pass 1 and pass 3 are sequential; the first scan, which finds the
// decoupled nodes, and the choices of pass 2, which depend only on the
// result of pass 1, are made in parallel.
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
// Rayleigh quotient, a lower bound). On the matrix of the adaptive L-shape
// loop with 870992 unknowns the estimates of levels 0–3 are 1.81, 1.43,
// 1.37 and 1.30, where the Gershgorin bound max_i Σ_j |a^F_ij| / a_ii is
// 2.00; with the bound, ω is smaller and the CG iterations of the members
// of TestIterationsBounded with about 10⁶ unknowns rose from 11–23 to
// 15–32. Four steps, which give smaller estimates, changed those
// iterations by at most one and made New about 4% faster, but raised
// them on the P1 Laplacian of the unit square with 10⁵ unknowns from 12
// to 14 and with the Chebyshev smoothers of BenchmarkSolve from 17 and 14
// to 19 and 16, so six were kept. Each step is one fused pass over the
// matrix (the filtered values are stored) and the vectors, split over
// goroutines by fixed blocks of 4096 rows whose partial inner products are
// added in block order; it runs concurrently with the aggregation, which
// does not need it.
//
// # Coarse operators
//
// The coarse matrix is the Galerkin product A_c = Pᵀ A P, computed as
// R (A P) with R = Pᵀ stored explicitly. The sparse products use
// Gustavson's row-wise algorithm with a dense accumulator whose slots hold
// a marker beside the partial sum (no hash maps), in a symbolic pass that counts each row and a
// numeric pass that writes it, sorted, straight into the result; rows are
// split over goroutines, balanced by the entries of the left factor. The
// transpose R = Pᵀ is a counting sort, also split over goroutines by rows
// of P (each range counts its entries per column, which fixes where it
// writes). Floating point makes R (A P) symmetric only to
// rounding, so it is replaced by (A_c + A_cᵀ)/2 in place, which is exactly
// symmetric. The coarsening stops at the first level with at most
// Settings.CoarseSize unknowns (default 100), after Settings.MaxLevels
// levels (default 20), or when a level has only decoupled nodes. The
// coarsest level's dense factorisation costs n³/6 operations in every
// setup, which weighs on small problems: with 100 instead of 300 the
// adaptive L-shape loop to 1e4 DOFs took 121–122 ms instead of 130–133
// (two runs each), while the iterations of TestIterationsBounded stayed
// the same but for one more on the largest graded Kellogg P2 problem
// (24 at 970497 unknowns).
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
//     forward one for symmetric A. On levels with at most 2¹⁷ unknowns
//     the sweeps are sequential, in the natural order. The first sweep
//     from x = 0 reads only the lower triangle, and the residual after it
//     is −Σ_{j>i} a_ij x_j, the upper triangle only.
//   - Chebyshev: the Chebyshev polynomial of degree ν in D⁻¹A for the
//     interval [λ/30, λ], λ = 1.1 × the power-method estimate of
//     λ_max(D⁻¹A), before and after (the polynomial is self-adjoint, so
//     the same one serves both). Its steps are fused row-parallel
//     products.
//
// On the levels with more than 2¹⁷ unknowns Gauss–Seidel is multicolour
// Gauss–Seidel: New colours the graph of the stored entries greedily (in
// ascending order, each row the least colour none of its lower
// neighbours has; 5 colours on the finest level of the adaptive L-shape
// matrix), and a sweep visits the colours in order, forward 0, 1, …,
// backward in reverse, which is again the adjoint. The rows of one colour
// are not coupled, so each colour is one row-parallel step, and the
// result does not depend on how its rows are split. New stores a copy of
// the level matrix in colour order, each row with the entries of the
// earlier colours first, then the diagonal, then those of the later
// colours: a colour is swept over contiguous memory, and the first sweep
// from zero and the residual after it read only the lower and the upper
// parts, as in the sequential sweep. The copy doubles the memory of the
// finest level. It is still Gauss–Seidel, only in another order, and
// converged like the sequential sweep (TestIterationsBounded: at most one
// iteration more or less on each problem); a parallel ℓ1 block
// Gauss–Seidel (Baker, Falgout, Kolev and Yang 2011) had been dropped by
// an earlier version of this package because it cost iterations on P2
// and graded meshes. Below 2¹⁷ unknowns the sequential sweep was as fast
// or faster: with 10⁵ unknowns the CG solve took 50 ms instead of 62 ms
// on the P1 Laplacian of the unit square, and the same 65 ms on an
// adaptive L-shape mesh.
//
// Measured with BenchmarkSolve on the P1 Laplacian of the unit square
// with 10⁶ unknowns on a two-core machine (CG to relative residual 1e-8
// from zero; costs in units of one product with the fine matrix by the
// parallel MulVec, timed in the same run), symmetric Gauss–Seidel with one
// sweep is the cheapest: it needs more iterations than the alternatives,
// but each V-cycle costs less.
//
//	smoother          V-cycle   iterations   CG solve
//	Gauss–Seidel ν=1    5.3         16          112
//	Gauss–Seidel ν=2    8.6         13          136
//	Chebyshev ν=2       7.2         17          152
//	Chebyshev ν=3       9.7         14          161
//
//	go test -run XXX -bench 'Solve$' -benchtime 3x ./internal/amg
//
// New costs 58 products (P1) or 51 (P2) at 10⁶ unknowns there. On the matrices
// of the adaptive L-shape loop, whose DOF numbering puts almost all
// entries far from the diagonal, New plus the solve cost 175 products for
// P1 with 870860 unknowns (New 60, V-cycle 4.8, 17 iterations) and 159
// for P2 with 895481 unknowns (θ = 0.1; New 56, V-cycle 4.1, 18
// iterations):
//
//	go test -run XXX -bench SolveAdaptive -benchtime 3x ./adapt
//
// Everything in New and Apply is linear in the size of the matrix.
//
// The default θ = 0.08 is that of Vaněk, Mandel and Brezina. For P2
// elements on meshes of right isosceles triangles (mesh.Rectangle and
// its refinements) the positive vertex–vertex couplings have strength
// 0.0833, just above it; θ = 0.1 leaves them weak and saved 16–26% of
// the CG iterations of the P2 members of TestIterationsBounded with
// 2·10⁵ and 10⁶ unknowns (at 10⁶: 16, 19, 19, 23 → 13, 16, 14, 19), and
// changed the P1 members by at most one iteration.
//
// # Determinism, allocation and concurrency
//
// Results are bit-identical whatever GOMAXPROCS is: every row of a product
// or of a parallel V-cycle step is computed by one goroutine in a fixed
// order, the inner products of the power method are summed by fixed
// blocks, the colouring, the sequential Gauss–Seidel sweeps and passes 1
// and 3 of the aggregation are sequential, and the transpose writes every
// entry to a place fixed by the matrix. New runs the colouring of each
// multicolour level and the power method of each level concurrently with
// the rest of the setup; they write only their own results, so the
// hierarchy does not depend on the scheduling. Apply allocates nothing: the
// work vectors of all levels are allocated by New, and the goroutines of
// the parallel steps (rows split over up to GOMAXPROCS goroutines above
// 20000 rows, as in sparse.CSR.MulVec) are started from closures built
// once. Apply uses these work vectors, so a Hierarchy must not be used by
// several goroutines at once; build one per goroutine instead.
//
// New allocates the arrays of every level (matrices, prolongators and
// their transposes, the colour-ordered copies, the work vectors) and one
// set of scratch arrays of the setup (strength of connection, aggregates,
// the vectors of the power method, the product A P, the accumulators of
// the products), sized by the finest level and shared by all levels, and
// the Hierarchy keeps both. Reset reuses them all: an array is replaced
// only where the new matrix needs more room, and then by one with half as
// much room again (spare.Headroom), so that a sequence of matrices growing
// by about 1.3 times per step reallocates at about every other step. New
// allocates 413 MB on the P1 Laplacian of the unit square with 10⁶
// unknowns (the filtered matrix of its finest level is the matrix itself,
// see strength), a Reset for the same matrix 0.8 MB; on the two-core
// machine with no other work (six runs each) New took 404–594 ns/row
// (median 488; 74–102 products with the matrix timed in the same run) and
// Reset 384–399 (median 388; 67–73 products):
//
//	go test -run XXX -bench 'New/square/n=1e\+06' -benchtime 3x -count 3 ./internal/amg
//
// On a machine loaded by other work the allocation weighs more: six
// interleaved runs there gave medians of 140 products for New, 72 for
// Reset (graded L-shape mesh with 840881 unknowns: 166 and 94), with
// spreads of ±20–60%:
//
//	go test -run XXX -bench New -count 6 ./internal/amg
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
