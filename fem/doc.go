// Package fem discretizes the elliptic problem
//
//	−∇·(a ∇u) + c u = f  in Ω,   u = g_D on Γ_D,   a ∇u·n = g_N on Γ_N,
//	a ∇u·n + α u = g_R on Γ_R
//
// with continuous Lagrange elements of degree 1 or 2 on a mesh.Mesh: spaces,
// problem data, assembly into a sparse system, the linear solve, discrete
// functions and the norms of their error against a known solution.
//
// A typical use:
//
//	m, _ := mesh.LShape(8)
//	s, _ := fem.NewSpace(m, 1)
//	p := &fem.Problem{F: f, Dirichlet: map[int32]fem.Func{1: g, 2: g}}
//	u, stats, err := fem.Solve(s, p)
//	_, e, err := u.Error(nil, exact, p)
//
// # Conventions
//
// DOF numbering: vertices first (DOF i is vertex i), then, for degree 2, one
// DOF per edge (DOF NumVertices+e is the midpoint of edge e). The local DOFs
// of triangle (v0, v1, v2) are v0, v1, v2, then the midpoints of the edges
// opposite v0, v1, v2. The basis is nodal: λ_i for degree 1; λ_i(2λ_i − 1)
// and 4λ_jλ_k for degree 2, with λ the barycentric coordinates.
//
// "DOFs" means the dimension of the whole space (Space.NumDOF), Dirichlet
// nodes included; the assembled system keeps all of them, with identity
// rows and columns at the Dirichlet nodes.
//
// Raviart–Thomas spaces (RTSpace): edge e carries the unit normal n_E, its
// tangent from the low vertex Edge[2e] to the high vertex Edge[2e+1] turned
// clockwise by a right angle; its DOFs are the moments ∫_E v·n_E L_j ds
// against the Legendre polynomials in the same low-to-high parameter. A
// triangle's interior DOFs follow its edge DOFs (see RTSpace).
//
// Diffusion is a symmetric positive definite 2×2 tensor, constant on each
// region (Problem.A) or a function of position (Problem.AFunc). The source
// is one function (Problem.F) or one per region (Problem.FRegion), read
// through Problem.Source. The energy norm of a function v is
//
//	|||v||| = (∫ a∇v·∇v + c v² + Σ_{Robin E} ∫_E α v²)^½,
//
// the norm of the bilinear form; without Robin edges and reaction it is
// ‖a^½∇v‖.
//
// Quadrature: Dunavant's symmetric rules on triangles and Gauss–Legendre
// rules on edges (package internal/quadrature). The load uses degree
// p + LoadExtraDegree; errors use rules chosen per triangle from the distance to the
// exact solution's singular points, and the Duffy transformation with
// geometric layers on triangles that contain one (see Function.Error).
//
// # Limits
//
// The checks of package mesh reject a triangle whose area is below 1e-13
// h_T² (angles below about 1e-13 rad). In the tests (estimate's
// TestEdgeCases) patch-test solutions are reproduced, and every indicator
// is finite, on triangles with angles of 1e-3 rad (relative energy error
// 1e-9: the stiffness entries span 1e-3 to 1e3), on a mesh graded to
// h = 6.6e-10 next to h = 0.7 (20 iterations), with a diffusion contrast of
// 1e8 between regions (12 iterations), and on
// a domain of size 1e-9 (iteration counts of the Diagonal preconditioner;
// the default Multigrid solves these small systems on its coarsest level).
// Diagonal scaling does not remove the growth of the condition number with
// the mesh size; Multigrid keeps 9 to 23 iterations to 1e-8 from 1e4 to 1e6
// unknowns on uniform and graded meshes, P1 and P2, with the Kellogg
// contrast of 161 (internal/amg's tests). A solve that does not reach its
// tolerance returns ErrNotConverged rather than an inaccurate solution.
//
// Assembly and error integration split their passes over GOMAXPROCS
// goroutines and sum every value in a fixed order, so results do not
// depend on GOMAXPROCS.
package fem
