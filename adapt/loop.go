package adapt

import (
	"context"
	"fmt"
	"math"
	"strings"
	"time"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Problem is what the loop solves: a boundary value problem of package fem
// on an initial mesh, with elements of a given degree, and optionally its
// exact solution, for true errors and effectivity indices.
type Problem struct {
	Mesh   *mesh.Mesh   // initial mesh
	Degree int          // 1 or 2
	Data   *fem.Problem // coefficients, source, boundary conditions
	Exact  *fem.Exact   // exact solution, or nil
}

// Settings are the stop rules and the observers of the loop. A zero limit
// means "no limit"; at least one of Tol, RelTol, MaxDOFs and MaxSteps must
// be set. Cancelling the context also stops the loop.
type Settings struct {
	// Tol stops the loop at the first step whose total estimate η ≤ Tol.
	Tol float64
	// RelTol stops the loop at the first step whose estimate is at most
	// RelTol times the energy norm of the solution, η ≤ RelTol |||u_h|||
	// (Step.EnergyNorm: fem.Function.EnergyNorm, the norm in which the
	// estimators measure the error). It must lie in [0, 1); zero means no
	// relative tolerance. With Tol also set, the first of the two rules
	// met stops the loop.
	RelTol float64
	// MaxDOFs is the DOF budget: the loop never solves on a mesh with more
	// DOFs; it stops when the next refined mesh would exceed it.
	MaxDOFs int
	// MaxSteps stops the loop after this many solved steps.
	MaxSteps int
	// OnStep, if not nil, sees each step's record as the step ends. It must
	// not keep or modify the Step; an error it returns stops the loop.
	OnStep func(Step) error
	// OnStepData, if not nil, sees each step's record with its mesh,
	// solution and indicators (StepData), after OnStep. The data belong to
	// the loop and are read-only: OnStepData must not modify them, nor keep
	// them past the call unless it copies them (the indicators' arrays are
	// reused by the next step; the mesh and the solution are dropped). An
	// error it returns stops the loop, as OnStep's does.
	OnStepData func(StepData) error
	// AlgebraicFraction is the nested-iteration rule for a TargetSolver
	// (such as the default FEMSolver): each solve after the first, warm
	// started from the previous solution, stops once the solver's estimate
	// of the algebraic error in the energy norm is at most
	// AlgebraicFraction times the discretization part of the previous
	// step's estimate, η − η_alg (Step.Estimate − Step.Algebraic; the whole
	// η for estimators that report no algebraic part), so that the
	// discretization error, not the solver, dominates. Setting it against
	// η itself would feed an estimator's algebraic part back into the next
	// tolerance: a loose solve raises η_alg, which loosens the next solve.
	// Zero means
	// DefaultAlgebraicFraction (0.1); a negative value turns the rule off,
	// so that every solve runs to the solver's own tolerance. The first
	// solve, and any solve whose previous η − η_alg is 0, also runs to the solver's
	// own tolerance. A solve stops earlier still at the solver's residual
	// tolerance or at its rounding floor (fem.SolveSettings.Tol documents
	// the floor: about u κ(A) in relative residual, u = 2⁻⁵³), whichever
	// it reaches first; Step.AtFloor records the floor.
	AlgebraicFraction float64
	// KeepOrder keeps the numbering that mesh.Refine gives each refined
	// mesh (old vertices and triangles first, the new ones appended).
	// By default the loop renumbers each refined mesh for locality
	// (mesh.Mesh.Renumber, with the parent map composed), which makes the
	// products with its matrices several times faster on large meshes;
	// the time counts in Step.RefineTime. The meshes, solutions and
	// figures of the steps are the same either way, up to the rounding
	// of sums taken in another order.
	KeepOrder bool
}

// StepData is what Settings.OnStepData sees of a step: its record, and the
// step's mesh, solution u_h and indicators (and, for a goal-oriented loop,
// the dual solution and the goal indicators; nil otherwise). Mesh, Solution
// and Indicators are those that Result holds when the loop stops after the
// step. All are read-only (see Settings.OnStepData).
type StepData struct {
	Step       Step
	Mesh       *mesh.Mesh
	Solution   *fem.Function
	Indicators *estimate.Indicators
	Dual       *fem.Function
	Goal       *estimate.GoalIndicators
}

// DefaultAlgebraicFraction is the nested-iteration fraction that
// Settings.AlgebraicFraction = 0 selects. With it, the multigrid solves
// after the first on the adaptive L-shape loop to 5e4 DOFs take at most 5
// iterations (a full solve on the last mesh: 10), and the final error and
// estimate are those of full solves to within 0.1% (TestNestedIteration).
const DefaultAlgebraicFraction = 0.1

// Method is how each step is done. Nil fields take the defaults:
// FEMSolver{} (this library's assembly and solver), estimate.Residual{} and
// Dorfler{Theta: 0.5}.
//
// Goal, if not nil, makes the loop goal-oriented: each step also solves the
// dual problem fem.Dual(Data, Goal), a(v, z) = J₀(v), with the same Solver
// (its matrix is the primal one; the solve starts from the previous dual
// solution carried to the new mesh and runs to the solver's own tolerance),
// estimates J(u) − J(u_h) by estimate.DualWeighted, and records the goal
// value, its estimate and, when the problem has an exact solution and Goal
// is a fem.ExactGoal, the true goal error and the goal effectivity. The
// dual solve's time adds to Step.SolveTime, the goal estimate's to
// EstimateTime, the exact goal value's to ErrorTime. With a goal the
// primal solve also runs to the solver's own tolerance
// (Settings.AlgebraicFraction does not apply): an algebraic error set
// against η would enter J(u_h) at the energy rate, not at the goal's
// doubled rate. With FEMSolver itself (not a type that wraps it) the dual
// system is built on the primal matrix and multigrid hierarchy
// (fem.Prepared.Dual) instead of being assembled again, with the same
// result; a goal step then costs 1.4, 2.0 and 2.6 energy steps at 1e4, 1e5
// and 1e6 DOFs (medians of noisy runs, see BenchmarkGoalStep). The goal is checked on
// the initial mesh (Goal.Load) before any solve. MarkGoal marks by the
// goal's indicators ι_T² (estimate.GoalIndicators.Mark2) instead of the
// estimator's η_T²; it needs Goal. Settings.Tol still applies to η.
type Method struct {
	Solver    Solver
	Estimator estimate.Estimator
	Marker    Marker
	Goal      fem.Goal
	MarkGoal  bool
}

// Solver solves the problem on the space it is given. A caller with an
// own discretization implements it and returns nodal values: one value per
// DOF of s, in the DOF numbering of fem.Space (vertices, then for P2 edge
// midpoints). guess is the previous step's solution carried to s (nil at the
// first step). iterations is reported in the step records (0 if it does not
// apply).
type Solver interface {
	Solve(s *fem.Space, p *fem.Problem, guess []float64) (u []float64, iterations int, err error)
}

// TargetSolver is a Solver that can also stop at an estimated algebraic
// error and reports its stats: SolveTo returns once its estimate of
// ‖u − u_k‖ in the energy norm is at most energyTol (never, for
// energyTol = 0), or its own tolerance or rounding floor is met. The loop
// calls SolveTo, not Solve, for every step, and records stats.Iterations
// and stats.AtFloor (a TargetSolver fills in the fields that apply). A
// type that embeds FEMSolver is a TargetSolver, so to wrap the solve it
// must wrap SolveTo.
type TargetSolver interface {
	Solver
	SolveTo(s *fem.Space, p *fem.Problem, guess []float64, energyTol float64) (u []float64, stats fem.SolveStats, err error)
}

// FEMSolver is the default Solver: fem.Assemble and System.Solve with the
// given settings (X0 is replaced by the guess).
type FEMSolver struct {
	Settings fem.SolveSettings
}

var _ TargetSolver = FEMSolver{}

// SolveTo solves as Solve does, also stopping once the estimated energy
// error is at most energyTol (fem.SolveSettings.EnergyTol; 0 leaves the
// settings' own value), and returns the solver's stats.
func (f FEMSolver) SolveTo(s *fem.Space, p *fem.Problem, guess []float64, energyTol float64) ([]float64, fem.SolveStats, error) {
	u, stats, _, err := f.solve(s, p, guess, energyTol)
	return u, stats, err
}

// solve is SolveTo, also returning the system with its preconditioner,
// from which the loop solves a goal's dual problem (goalState.step).
func (f FEMSolver) solve(s *fem.Space, p *fem.Problem, guess []float64, energyTol float64) ([]float64, fem.SolveStats, *fem.Prepared, error) {
	sys, err := fem.Assemble(s, p)
	if err != nil {
		return nil, fem.SolveStats{}, nil, err
	}
	ps, err := sys.Prepare(f.Settings.Preconditioner)
	if err != nil {
		return nil, fem.SolveStats{}, nil, err
	}
	st := f.Settings
	st.X0 = guess
	if energyTol > 0 {
		st.EnergyTol = energyTol
	}
	u, stats, err := ps.Solve(st)
	if err != nil {
		return nil, stats, nil, err
	}
	return u.U, stats, ps, nil
}

// Solve assembles and solves p on s, starting from guess.
func (f FEMSolver) Solve(s *fem.Space, p *fem.Problem, guess []float64) ([]float64, int, error) {
	u, stats, err := f.SolveTo(s, p, guess, 0)
	return u, stats.Iterations, err
}

// Status says why the loop stopped.
type Status int

const (
	Running         Status = iota // not stopped (only in an error's result)
	Converged                     // the estimate met Settings.Tol or Settings.RelTol
	DOFLimit                      // the next mesh would exceed Settings.MaxDOFs
	StepLimit                     // Settings.MaxSteps steps were solved
	NothingToRefine               // the marker marked no triangle
)

// String returns the status as a word.
func (s Status) String() string {
	switch s {
	case Running:
		return "running"
	case Converged:
		return "converged"
	case DOFLimit:
		return "dof-limit"
	case StepLimit:
		return "step-limit"
	case NothingToRefine:
		return "nothing-to-refine"
	}
	return "unknown"
}

// Result is the outcome of Run: the last completed step's mesh, solution
// and indicators, the records of all completed steps, and the status.
type Result struct {
	Mesh       *mesh.Mesh
	Solution   *fem.Function
	Indicators *estimate.Indicators
	Steps      []Step
	Status     Status
	// Dual and Goal are the last step's dual solution and goal indicators,
	// when Method.Goal is set.
	Dual *fem.Function
	Goal *estimate.GoalIndicators
}

// Stages of a step, as named in StepError.
const (
	StageSolve    = "solve"
	StageEstimate = "estimate"
	StageError    = "error"
	StageMark     = "mark"
	StageRefine   = "refine"
	StageRecord   = "record"
)

// StepError reports the step and stage where the loop failed. The Result
// returned with it holds the completed steps and the last good mesh.
type StepError struct {
	Step  int
	Stage string
	Err   error
}

// Error reads "adapt: step 3: solve: fem: triangle 5 at (0.5, 0.25): ...",
// saying each context once: the reason's own "adapt: " is dropped, and
// the stage is left out when the reason already begins with it, as the
// errors of package estimate begin with "estimate: ".
func (e *StepError) Error() string {
	msg := "<nil>"
	if e.Err != nil {
		msg = strings.TrimPrefix(e.Err.Error(), "adapt: ")
	}
	if !strings.HasPrefix(msg, e.Stage+": ") {
		msg = e.Stage + ": " + msg
	}
	return fmt.Sprintf("adapt: step %d: %s", e.Step, msg)
}

// Unwrap returns the reason, for errors.Is and errors.As.
func (e *StepError) Unwrap() error { return e.Err }

// Run drives the solve–estimate–mark–refine loop from p.Mesh until a stop
// rule holds. Each step solves (from the previous solution carried to the
// new mesh), estimates, computes the energy norm of u_h
// (fem.Function.EnergyNorm: one pass over the triangles, counted in
// Step.EstimateTime), measures the true error if p.Exact is set, records the step (OnStep,
// then OnStepData), then marks and refines. On an error it returns the result so
// far (completed steps, last good mesh and solution) with a *StepError;
// after cancellation the error wraps ctx.Err(). A nil ctx is an error
// wrapping ErrArgument; bad settings wrap ErrSettings; a caller's method
// whose result does not fit the step gives a StepError wrapping ErrMethod.
//
// Memory: the refined mesh is renumbered in place (mesh.Mesh.Renumber),
// and on meshes of more than 1e5 triangles the loop runs the garbage
// collector after the solve and after the refinement, so that a stage's
// arrays reuse the memory that the stages before it left instead of
// memory never touched before (see collectGarbage for why and when). The
// loop does not keep the solver's arrays from one step to the next in a
// fem.Workspace: each mesh is about 1.3 times the last, so kept arrays
// must be replaced every other step anyway, and keeping them through the
// refinement raises the peak. Measured on the L-shape loop to 1.14e6 DOFs
// (three runs each, alternated, on a shared two-core machine): with a
// Workspace 2.19–2.21 GB peak resident set and 4.0–4.1 s of system time
// against 12.0–12.7 s of user time; without, 1.15–1.16 GB, 3.1–3.4 s and
// 11.6–12.1 s. So a step allocates about its whole working set anew: the
// last step of the L-shape loop allocated 1,086, 1,059 and 1,178 bytes per
// DOF of its mesh at 1e4, 1e5 and 1e6 DOFs (BenchmarkLoop's
// step-alloc-B/DOF, the same in each of three runs), about 1.0 GB at
// 870,000 DOFs, most of which reuses memory that the collections after the
// solve and the refinement returned to the heap.
func Run(ctx context.Context, p Problem, s Settings, meth Method) (*Result, error) {
	if ctx == nil {
		return nil, fmt.Errorf("adapt: Run: nil context: %w", ErrArgument)
	}
	if err := check(p, s); err != nil {
		return nil, err
	}
	if err := checkGoal(p, meth); err != nil {
		return nil, err
	}
	if meth.Solver == nil {
		meth.Solver = FEMSolver{}
	}
	if meth.Estimator == nil {
		meth.Estimator = estimate.Residual{}
	}
	if meth.Marker == nil {
		meth.Marker = Dorfler{Theta: 0.5}
	}
	frac := s.AlgebraicFraction
	if frac == 0 {
		frac = DefaultAlgebraicFraction
	}
	res := &Result{}
	m := p.Mesh
	var guess *fem.Function // previous solution, carried to m
	var in *estimate.Indicators
	var marks []bool
	var err2 []float64
	var gs *goalState
	var dualGuess []float64
	if meth.Goal != nil {
		gs = &goalState{goal: meth.Goal, dual: fem.Dual(p.Data, meth.Goal)}
	}
	for step := 0; ; step++ {
		fail := func(stage string, err error) (*Result, error) {
			return res, &StepError{Step: step, Stage: stage, Err: err}
		}
		rec := Step{Step: step, Triangles: m.NumTriangles()}
		sp, err := fem.NewSpace(m, p.Degree)
		if err != nil {
			return fail(StageSolve, err)
		}
		rec.DOFs = sp.NumDOF()
		rec.FreeDOFs = rec.DOFs - len(sp.BoundaryDOFs(p.Data.DirichletTags()...))
		if err := ctx.Err(); err != nil {
			return fail(StageSolve, err)
		}
		t := time.Now()
		var g []float64
		if guess != nil {
			g = guess.U
		}
		var uv []float64
		var st fem.SolveStats
		etol := 0.0
		if frac > 0 && step > 0 && meth.Goal == nil {
			prev := res.Steps[step-1]
			etol = frac * max(prev.Estimate-prev.Algebraic, 0)
		}
		if fs, ok := meth.Solver.(FEMSolver); ok {
			// The library's solver keeps the system for the dual solve.
			var ps *fem.Prepared
			uv, st, ps, err = fs.solve(sp, p.Data, g, etol)
			if gs != nil {
				gs.primal = ps
			}
		} else if ts, ok := meth.Solver.(TargetSolver); ok {
			uv, st, err = ts.SolveTo(sp, p.Data, g, etol)
		} else {
			uv, st.Iterations, err = meth.Solver.Solve(sp, p.Data, g)
		}
		rec.Iterations, rec.AtFloor, rec.SolveTime = st.Iterations, st.AtFloor, time.Since(t)
		if err != nil {
			return fail(StageSolve, err)
		}
		if len(uv) != sp.NumDOF() {
			return fail(StageSolve, fmt.Errorf("%w: solver returned %d values for %d DOFs", ErrMethod, len(uv), sp.NumDOF()))
		}
		u := &fem.Function{Space: sp, U: uv}
		collectGarbage(rec.Triangles)
		if err := ctx.Err(); err != nil {
			return fail(StageEstimate, err)
		}
		t = time.Now()
		if in, err = meth.Estimator.Estimate(in, u, p.Data); err != nil {
			return fail(StageEstimate, err)
		}
		rec.EstimateTime = time.Since(t)
		if in == nil {
			return fail(StageEstimate, fmt.Errorf("%w: estimator returned no indicators and no error", ErrMethod))
		}
		if len(in.Eta2) != m.NumTriangles() {
			return fail(StageEstimate, fmt.Errorf("%w: estimator returned %d indicators for %d triangles", ErrMethod, len(in.Eta2), m.NumTriangles()))
		}
		rec.Estimate, rec.Oscillation, rec.Algebraic = in.Total(), in.Oscillation(), in.Algebraic
		if math.IsNaN(rec.Algebraic) || rec.Algebraic < 0 || rec.Algebraic > rec.Estimate {
			return fail(StageEstimate, fmt.Errorf("%w: estimator returned an algebraic part %g outside [0, η = %g]", ErrMethod, rec.Algebraic, rec.Estimate))
		}
		t = time.Now()
		if rec.EnergyNorm, err = u.EnergyNorm(p.Data); err != nil {
			return fail(StageEstimate, err)
		}
		rec.EstimateTime += time.Since(t)
		if p.Exact != nil {
			t = time.Now()
			var e float64
			if err2, e, err = estimate.TrueError(err2, u, *p.Exact, p.Data); err != nil {
				return fail(StageError, err)
			}
			rec.HasError, rec.Error, rec.ErrorTime = true, e, time.Since(t)
			if e > 0 {
				rec.Effectivity = rec.Estimate / e
			}
		}
		if gs != nil {
			if stage, err := gs.step(&rec, meth, sp, u, p.Data, p.Exact, dualGuess); err != nil {
				return fail(stage, err)
			}
			res.Dual, res.Goal = gs.z, gs.in
		}
		// The step is complete: it becomes the result.
		res.Mesh, res.Solution, res.Indicators = m, u, in
		status := Running
		switch {
		case s.Tol > 0 && rec.Estimate <= s.Tol:
			status = Converged
		case s.RelTol > 0 && rec.Estimate <= s.RelTol*rec.EnergyNorm:
			status = Converged
		case s.MaxSteps > 0 && step+1 >= s.MaxSteps:
			status = StepLimit
		}
		if status == Running {
			if err := ctx.Err(); err != nil {
				res.Steps = append(res.Steps, rec)
				return fail(StageMark, err)
			}
			t = time.Now()
			eta2 := in.Eta2
			if meth.MarkGoal {
				eta2 = gs.in.Mark2
			}
			marks, err = meth.Marker.Mark(marks, eta2)
			rec.MarkTime = time.Since(t)
			if err == nil && len(marks) != m.NumTriangles() {
				err = fmt.Errorf("%w: marker returned %d marks for %d triangles", ErrMethod, len(marks), m.NumTriangles())
			}
			if err != nil {
				res.Steps = append(res.Steps, rec)
				return fail(StageMark, err)
			}
			for _, b := range marks {
				if b {
					rec.Marked++
				}
			}
			if rec.Marked == 0 {
				status = NothingToRefine
			}
		}
		var next *mesh.Mesh
		var parents *mesh.Parents
		if status == Running {
			t = time.Now()
			next, parents, err = m.Refine(marks)
			if err == nil && !s.KeepOrder {
				next, parents, err = reorder(next, parents)
			}
			collectGarbage(rec.Triangles)
			rec.RefineTime = time.Since(t)
			if err != nil {
				res.Steps = append(res.Steps, rec)
				return fail(StageRefine, err)
			}
			if s.MaxDOFs > 0 && dofs(next, p.Degree) > s.MaxDOFs {
				status, next = DOFLimit, nil
			}
		}
		res.Steps = append(res.Steps, rec)
		if s.OnStep != nil {
			if err := s.OnStep(rec); err != nil {
				return fail(StageRecord, err)
			}
		}
		if s.OnStepData != nil {
			sd := StepData{Step: rec, Mesh: m, Solution: u, Indicators: in}
			if gs != nil {
				sd.Dual, sd.Goal = gs.z, gs.in
			}
			if err := s.OnStepData(sd); err != nil {
				return fail(StageRecord, err)
			}
		}
		if status != Running {
			res.Status = status
			return res, nil
		}
		ns, _ := fem.NewSpace(next, p.Degree)
		if guess, err = u.Prolong(ns, parents); err != nil {
			return fail(StageRefine, err)
		}
		if gs != nil {
			zg, err := gs.z.Prolong(ns, parents)
			if err != nil {
				return fail(StageRefine, err)
			}
			dualGuess = zg.U
		}
		m = next
	}
}

// reorder renumbers a refined mesh for locality, in place (the loop holds
// the only reference to it), and composes its parent map with the
// renumbering.
func reorder(m *mesh.Mesh, p *mesh.Parents) (*mesh.Mesh, *mesh.Parents, error) {
	o, err := m.Renumber()
	if err != nil {
		return nil, nil, err
	}
	q, err := p.Compose(o)
	if err != nil {
		return nil, nil, err
	}
	return m, q, nil
}

// dofs returns the dimension of the degree-p space on m.
func dofs(m *mesh.Mesh, degree int) int {
	if degree == 2 {
		return m.NumVertices() + m.NumEdges()
	}
	return m.NumVertices()
}

func check(p Problem, s Settings) error {
	switch {
	case p.Mesh == nil || p.Data == nil:
		return fmt.Errorf("adapt: Run: %w: the problem needs a mesh and data", ErrSettings)
	case p.Mesh.NumTriangles() == 0:
		return fmt.Errorf("adapt: Run: the problem's mesh has no triangles: %w", mesh.ErrEmpty)
	case p.Degree != 1 && p.Degree != 2:
		return fmt.Errorf("adapt: Run: %w: Degree = %d, want 1 or 2", ErrSettings, p.Degree)
	case s.Tol < 0 || s.Tol != s.Tol:
		return fmt.Errorf("adapt: Run: %w: Tol = %g, want ≥ 0", ErrSettings, s.Tol)
	case !(s.RelTol >= 0 && s.RelTol < 1):
		return fmt.Errorf("adapt: Run: %w: RelTol = %g, want 0 ≤ RelTol < 1", ErrSettings, s.RelTol)
	case math.IsNaN(s.AlgebraicFraction) || math.IsInf(s.AlgebraicFraction, 0):
		return fmt.Errorf("adapt: Run: %w: AlgebraicFraction = %g, want a finite value (0: default, negative: off)", ErrSettings, s.AlgebraicFraction)
	case s.MaxDOFs < 0 || s.MaxSteps < 0:
		return fmt.Errorf("adapt: Run: %w: MaxDOFs = %d, MaxSteps = %d, want ≥ 0", ErrSettings, s.MaxDOFs, s.MaxSteps)
	case s.Tol == 0 && s.RelTol == 0 && s.MaxDOFs == 0 && s.MaxSteps == 0:
		return fmt.Errorf("adapt: Run: %w: no stop rule: set Tol, RelTol, MaxDOFs or MaxSteps", ErrSettings)
	case s.MaxDOFs > 0 && dofs(p.Mesh, p.Degree) > s.MaxDOFs:
		return fmt.Errorf("adapt: Run: %w: the initial mesh has %d DOFs, more than MaxDOFs = %d", ErrSettings, dofs(p.Mesh, p.Degree), s.MaxDOFs)
	}
	if err := p.Data.Check(p.Mesh); err != nil {
		return fmt.Errorf("adapt: Run: %w", err)
	}
	return nil
}
