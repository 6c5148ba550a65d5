package fem

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/amg"
	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// Preconditioner selects the preconditioner of the conjugate gradient
// method.
type Preconditioner int

const (
	// Multigrid is smoothed-aggregation algebraic multigrid (package
	// internal/amg): iteration counts that do not grow with the mesh, on
	// the graded meshes of adaptivity and across coefficient jumps. It is
	// the default.
	Multigrid Preconditioner = iota
	// Diagonal is Jacobi (diagonal) scaling: no setup, but iteration counts
	// that grow like the square root of the condition number.
	Diagonal
)

// SolveSettings controls the linear solve. The zero value asks for the
// defaults.
type SolveSettings struct {
	// Preconditioner is Multigrid (the zero value) or Diagonal.
	Preconditioner Preconditioner
	// Tol is the relative residual ‖B − A u‖₂ / ‖B‖₂ at which the solver
	// stops; zero means 1e-10.
	//
	// Rounding sets a floor under the attainable relative residual: the
	// residual of a stored u is computed with an error of up to
	//
	//	φ = ‖ γ_{mᵢ+1} (|B| + |A| |u|)ᵢ ‖₂ ≤ γ_{m+1} (1 + √m κ₂(A)) ‖B‖₂,
	//	γ_j = j u₀ / (1 − j u₀),   u₀ = 2⁻⁵³,
	//
	// with mᵢ the entries of row i of A and m their maximum, so it grows
	// like u₀ κ₂(A) (Higham, Accuracy and Stability of Numerical
	// Algorithms, 2002, §3.5; the drift of the conjugate gradient residual:
	// Greenbaum, SIAM J. Matrix Anal. Appl. 18, 1997; both from memory; the
	// details are in internal/sparse, CGSettings.Tol). On graded meshes the
	// default Tol can lie below what rounding allows: on the adaptive P2
	// mesh of a two-material fin with 45,734 DOFs and smallest triangle
	// 2.4e-9 (package adapt, TestFinDefaults) φ / ‖B‖₂ = 2.25e-9, and the
	// solve from zero stagnates at 1.37e-10. A residual that stagnates
	// within the floor ends the solve with SolveStats.AtFloor set and no
	// error; one that stagnates above it is an error wrapping
	// ErrNotConverged.
	Tol float64
	// MaxIter limits the iterations; zero means 10·n + 100 for n DOFs, a
	// guard that the default multigrid preconditioner does not reach on a
	// well-posed problem. Reaching it is an error wrapping ErrNotConverged.
	MaxIter int
	// X0 is the initial guess (length NumDOF); nil means zero, with the
	// Dirichlet values in place.
	X0 []float64
	// EnergyTol, if positive, also stops the solver once its estimate of the
	// algebraic error in the energy norm, ‖u − u_k‖_A, is at most EnergyTol
	// (a delayed Hestenes–Stiefel estimate, a lower bound; see
	// internal/sparse). The adaptive loop sets it to a fraction of the
	// discretization estimate.
	EnergyTol float64
}

// SolveStats reports what the linear solver did.
type SolveStats struct {
	Iterations  int     // preconditioned conjugate gradient iterations
	Residual    float64 // final relative residual ‖B − A u‖₂ / ‖B‖₂
	EnergyError float64 // the solver's last estimate of the algebraic error in the energy norm (0 before 4 iterations)
	AtFloor     bool    // whether the solve stopped at the rounding floor, above Tol (see SolveSettings.Tol); not an error
	Floor       float64 // the rounding floor, as a relative residual, where the solver computed it (at a stagnation), else 0
}

// Solve solves the system by the preconditioned conjugate gradient method,
// with algebraic multigrid by default (see Preconditioner). For a pure
// Neumann problem the solution is shifted to zero mean value. It stops at
// Tol, at EnergyTol, or at the rounding floor (SolveStats.AtFloor; see
// SolveSettings.Tol), and fails only for genuine non-convergence: it
// returns an error wrapping ErrNotConverged, with the stats of the last
// iterate, when MaxIter iterations pass or the residual stagnates above the
// rounding floor, and an error naming the breakdown when the matrix or the
// preconditioner proves not positive definite. It builds the
// preconditioner on each call; Prepare builds it once for several solves.
func (sys *System) Solve(s SolveSettings) (*Function, SolveStats, error) {
	p, err := sys.Prepare(s.Preconditioner)
	if err != nil {
		return nil, SolveStats{}, err
	}
	return p.Solve(s)
}

// Prepared is a System with its preconditioner built, for several solves
// with the same matrix: Solve solves A u = B as System.Solve does, and Dual
// gives the system of a goal's dual problem, which has the same matrix
// (see Dual), with the same preconditioner. The preconditioner is not safe
// for concurrent use: neither is a Prepared, nor two that share it.
type Prepared struct {
	*System
	pre sparse.Preconditioner
}

// Prepare builds the preconditioner of the given kind for sys.A (the
// multigrid hierarchy, whose setup costs about as much as a solve).
func (sys *System) Prepare(kind Preconditioner) (*Prepared, error) {
	var pre sparse.Preconditioner
	var err error
	switch kind {
	case Multigrid:
		var st amg.Settings
		if sys.Space.Degree == 2 {
			// The vertex–vertex couplings of P2 on right isosceles triangles
			// have strength about 0.083, just above the default threshold;
			// θ = 0.1 drops them (see internal/amg's doc for the iteration
			// counts this gives).
			st.Theta = 0.1
		}
		if w := sys.work; w != nil {
			// The hierarchy is rebuilt in the memory of the previous one.
			if w.amg == nil {
				w.amg = new(amg.Hierarchy)
			}
			err = w.amg.Reset(sys.A.csr(), st)
			pre = w.amg
		} else {
			pre, err = amg.New(sys.A.csr(), st)
		}
	case Diagonal:
		pre, err = sparse.NewJacobi(sys.A.csr())
	default:
		err = fmt.Errorf("preconditioner %d: %w", kind, ErrArgument)
	}
	if err != nil {
		return nil, fmt.Errorf("fem: Solve: %w", err)
	}
	return &Prepared{System: sys, pre: pre}, nil
}

// Solve solves A u = B as System.Solve does, with the kept preconditioner
// (s.Preconditioner is not read).
func (ps *Prepared) Solve(s SolveSettings) (*Function, SolveStats, error) {
	sys := ps.System
	n := sys.Space.NumDOF()
	x := make([]float64, n)
	if s.X0 != nil {
		if len(s.X0) != n {
			return nil, SolveStats{}, fmt.Errorf("fem: Solve: initial guess has length %d, want %d: %w", len(s.X0), n, ErrArgument)
		}
		copy(x, s.X0)
	}
	for _, d := range sys.Dirichlet {
		x[d] = sys.B[d]
	}
	res, err := sparse.CG(sys.A.csr(), sys.B, x, ps.pre, sparse.CGSettings{Tol: s.Tol, MaxIter: s.MaxIter, EnergyTol: s.EnergyTol,
		Work: sys.work.cgWork(n)})
	stats := SolveStats{Iterations: res.Iterations, Residual: res.Residual, EnergyError: res.EnergyError, AtFloor: res.AtFloor, Floor: res.Floor}
	if err != nil {
		return nil, stats, fmt.Errorf("fem: Solve: %w", err)
	}
	u := &Function{Space: sys.Space, U: x}
	if sys.Problem.pureNeumann() {
		area := 0.0
		for k := range sys.Space.Mesh.NumTriangles() {
			area += sys.Space.Mesh.Area(k)
		}
		mean := u.Integral() / area
		for i := range x {
			x[i] -= mean
		}
	}
	return u, stats, nil
}

// Solve assembles and solves p on s with the default settings.
func Solve(s *Space, p *Problem) (*Function, SolveStats, error) {
	sys, err := Assemble(s, p)
	if err != nil {
		return nil, SolveStats{}, err
	}
	return sys.Solve(SolveSettings{})
}
