// Command embed shows how to plug an in-house finite element solver into
// the library's adaptive loop, and how to drive the loop by hand.
//
// The solver in solver.go is a complete P1 discretization of
// −∇·(a∇u) = f written in this example: its own element matrices, its own
// sparse matrix, Dirichlet conditions by elimination and its own conjugate
// gradient method with a Jacobi preconditioner. It uses the library only
// for the mesh and the problem data. Wrapped as an adapt.Solver, it is
// handed to adapt.Run, which estimates the error of each solution
// (estimate.Residual), marks triangles (adapt.Dorfler) and refines the mesh
// (mesh.Refine) between solves. At the end the program does one more
// step without adapt.Run — solve, estimate, mark, refine — calling each
// piece itself, for a caller who runs their own loop.
//
// The scenario is steady seepage under a dam whose cut-off wall has an
// L-shaped section: the pressure head h solves −∇·(k∇h) = 0 in the soil
// around the corner of the wall, with the permeability k = 1 (dimensionless
// units), and the head is singular at the re-entrant corner. The data and
// the exact head h = r^{2/3} sin(2θ/3) are those of the library's L-shape
// model problem, so the true error and the effectivity index
// η / ‖∇(h − h_h)‖ are printed beside the estimate η.
//
// The estimate measures the discretization error of the finite element
// solution of this model only, not modelling error (the geometry, the
// permeability, the boundary conditions, or whether steady seepage
// describes the site). Engineering use of such results follows local codes
// and licensed professional practice.
//
// The program writes no files.
//
// Usage:
//
//	go run ./examples/embed [-max-dofs 20000] [-theta 0.5]
package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/examples/internal/cli"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

func main() {
	os.Exit(run(os.Stdout, os.Stderr, os.Args[1:]))
}

// run is the program: it parses args, prints to stdout and stderr, and
// returns the exit status: 0 on success, 1 if the computation fails, 2 for
// bad arguments.
func run(stdout, stderr io.Writer, args []string) int {
	fs := flag.NewFlagSet("embed", flag.ContinueOnError)
	maxDOFs := fs.Int("max-dofs", 20000, cli.BudgetHelp)
	theta := fs.Float64("theta", 0.5, "Dörfler marking parameter θ, in (0, 1]")
	about := "Seepage under a dam by a caller's own P1 solver plugged into the adaptive loop."
	if err := cli.Parse(fs, args, "embed [flags]", about, stdout); err != nil {
		if errors.Is(err, cli.ErrHelp) {
			return 0
		}
		fmt.Fprintln(stderr, "embed:", err)
		return 2
	}
	if err := cli.Budget(*maxDOFs); err != nil {
		fmt.Fprintln(stderr, "embed:", err)
		return 2
	}
	if !(*theta > 0 && *theta <= 1) { // also rejects NaN
		fmt.Fprintf(stderr, "embed: -theta %g: want 0 < θ ≤ 1\n", *theta)
		return 2
	}
	if err := seepage(stdout, *maxDOFs, *theta); err != nil {
		fmt.Fprintln(stderr, "embed:", err)
		return 1
	}
	return 0
}

// seepage runs the adaptive loop with the in-house solver, then one step
// by hand.
func seepage(w io.Writer, maxDOFs int, theta float64) error {
	exact, data := known.LShape() // h = r^{2/3} sin(2θ/3); zero head on the wall's faces (tags 2, 3)
	m0, err := mesh.LShape(2)
	if err != nil {
		return err
	}
	solver := inHouse{}
	marker := adapt.Dorfler{Theta: theta}

	fmt.Fprintf(w, "seepage under an L-shaped cut-off: P1, in-house solver, Dörfler θ = %g, budget %d DOFs\n", theta, maxDOFs)
	fmt.Fprintf(w, "%4s %9s %8s %11s %11s %6s %6s\n", "step", "triangles", "DOFs", "eta", "error", "eff", "iters")

	// 1. The library's loop, with the in-house solver plugged in.
	res, err := adapt.Run(context.Background(),
		adapt.Problem{Mesh: m0, Degree: 1, Data: data, Exact: &exact},
		adapt.Settings{
			MaxDOFs: maxDOFs,
			OnStep: func(s adapt.Step) error {
				_, err := fmt.Fprintf(w, "%4d %9d %8d %11.4e %11.4e %6.3f %6d\n",
					s.Step, s.Triangles, s.DOFs, s.Estimate, s.Error, s.Effectivity, s.Iterations)
				return err
			},
		},
		adapt.Method{Solver: solver, Estimator: estimate.Residual{}, Marker: marker},
	)
	if err != nil {
		return err // a *adapt.StepError names the step and the stage
	}
	fmt.Fprintf(w, "stopped: %s after %d steps\n", res.Status, len(res.Steps))

	// 2. The same step by hand, on the final mesh: what a caller with their
	// own loop calls. The refined mesh is only built, not solved, so it may
	// exceed the budget.
	m := res.Mesh
	s, err := fem.NewSpace(m, 1)
	if err != nil {
		return err
	}
	u, iters, err := solver.Solve(s, data, nil) // from zero, to show the solver's own work
	if err != nil {
		return err
	}
	in, err := estimate.Residual{}.Estimate(nil, &fem.Function{Space: s, U: u}, data)
	if err != nil {
		return err
	}
	marks, err := marker.Mark(nil, in.Eta2)
	if err != nil {
		return err
	}
	marked := 0
	for _, b := range marks {
		if b {
			marked++
		}
	}
	next, parents, err := m.Refine(marks)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "lower-level step: %d triangles, %d DOFs, %d iterations, eta = %.4e, marked %d, refined to %d triangles and %d vertices (%d new)\n",
		m.NumTriangles(), s.NumDOF(), iters, in.Total(), marked, next.NumTriangles(), next.NumVertices(), len(parents.Vertex)-parents.OldVertices)
	return nil
}
