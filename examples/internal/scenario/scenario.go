// Package scenario is the command-line driver shared by the examples that
// run one adaptive computation with a known exact solution: flags, the
// per-step table, and the output files.
package scenario

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/adapt/study"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/examples/internal/cli"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Scenario describes one computation.
type Scenario struct {
	Name       string // command name, for messages
	Title      string // first line of the printed table
	Mesh       func() (*mesh.Mesh, error)
	Exact      fem.Exact
	Data       *fem.Problem
	DefaultOut string
	MaxDOFs    int     // default DOF budget
	Slopes     []Slope // reference slopes drawn in convergence.svg
}

// Slope is a reference line value ∝ N^Exponent labelled Label.
type Slope struct {
	Exponent float64
	Label    string
}

// Options are the parsed flags.
type Options struct {
	Degree    int
	Estimator string
	Theta     float64
	MaxDOFs   int
	Tol       float64
	Out       string
	Uniform   bool
	Goal      fem.Goal  // from -goal; nil without it
	Picture   int       // width of the mesh pictures in pixels
	Zoom      []float64 // X, Y, R of the zoomed picture; nil: around the singular point
}

// Estimators maps the -estimator flag's values to estimators: the names
// and estimators of the effectivity study (adapt/study), shared by every
// example.
var Estimators = func() map[string]estimate.Estimator {
	m := map[string]estimate.Estimator{}
	for _, e := range study.Estimators() {
		m[e.Name] = e.Est
	}
	return m
}()

// estimatorNames returns the -estimator flag's values in the study's
// order, as a list for messages.
func estimatorNames() string {
	var names []string
	for _, e := range study.Estimators() {
		names = append(names, e.Name)
	}
	return strings.Join(names[:len(names)-1], ", ") + " or " + names[len(names)-1]
}

// errUsage marks a bad command line: exit status 2.
var errUsage = errors.New("usage")

// Parse parses and checks the flags and the output folder (which it
// creates, so that a run that could not write its results fails before
// computing them). Errors are one line and wrap errUsage. Asked for help,
// it prints the usage to stdout and returns cli.ErrHelp.
func (sc *Scenario) Parse(args []string, stdout io.Writer) (Options, error) {
	var o Options
	fs := flag.NewFlagSet(sc.Name, flag.ContinueOnError)
	fs.IntVar(&o.Degree, "p", 1, "polynomial degree, 1 or 2")
	fs.StringVar(&o.Estimator, "estimator", "residual", "error estimator: "+estimatorNames())
	fs.Float64Var(&o.Theta, "theta", 0.5, "Dörfler marking parameter, in (0, 1]")
	fs.IntVar(&o.MaxDOFs, "max-dofs", sc.MaxDOFs, cli.BudgetHelp)
	fs.Float64Var(&o.Tol, "tol", 0, "stop when the estimate is at most this, a finite value ≥ 0 (0: no tolerance)")
	fs.StringVar(&o.Out, "out", sc.DefaultOut, "folder for the output files (created if missing)")
	fs.BoolVar(&o.Uniform, "uniform", false, "refine uniformly instead of adaptively")
	fs.IntVar(&o.Picture, "picture", PictureWidth, "width of the mesh pictures in pixels, 200 to 2000")
	zoom := fs.String("zoom", "", "zoomed picture: X,Y,R, the square of half-width R around (X, Y) (default: around the singular point)")
	goal := fs.String("goal", "", "goal functional, marked by: box:X0,Y0,X1,Y1, region:TAG or flux:TAG")
	bad := func(format string, a ...any) (Options, error) {
		return o, fmt.Errorf("%w: %s: %s", errUsage, sc.Name, fmt.Sprintf(format, a...))
	}
	about := sc.Title + ".\nRuns the adaptive loop and, for comparison, uniform refinement; prints one row per step\n" +
		"with the true error beside the estimate; writes the step records, the final mesh and pictures into -out.\n" +
		"The estimate measures discretization error only, not modelling error."
	if err := cli.Parse(fs, args, sc.Name+" [flags]", about, stdout); err != nil {
		if errors.Is(err, cli.ErrHelp) {
			return o, err
		}
		return bad("%v", err)
	}
	budget := cli.Budget(o.MaxDOFs)
	if *zoom != "" {
		for _, f := range strings.Split(*zoom, ",") {
			v, err := strconv.ParseFloat(strings.TrimSpace(f), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return bad("-zoom %q: want three finite numbers X,Y,R", *zoom)
			}
			o.Zoom = append(o.Zoom, v)
		}
		if len(o.Zoom) != 3 || !(o.Zoom[2] > 0) {
			return bad("-zoom %q: want X,Y,R with R > 0", *zoom)
		}
	}
	var err error
	if o.Goal, err = parseGoal(*goal); err != nil {
		return bad("%v", err)
	}
	switch {
	case o.Degree != 1 && o.Degree != 2:
		return bad("-p %d: want 1 or 2", o.Degree)
	case Estimators[o.Estimator] == nil:
		return bad("-estimator %q: want %s", o.Estimator, estimatorNames())
	case !(o.Theta > 0 && o.Theta <= 1):
		return bad("-theta %g: want a value in (0, 1]", o.Theta)
	case budget != nil:
		return bad("%v", budget)
	case o.Picture < 200 || o.Picture > 2000:
		return bad("-picture %d: want 200 to 2000", o.Picture)
	case !(o.Tol >= 0) || math.IsInf(o.Tol, 0):
		return bad("-tol %g: want a finite value ≥ 0", o.Tol)
	}
	if err := cli.CheckOut(o.Out); err != nil {
		return bad("%v", err)
	}
	return o, nil
}

// Main runs the scenario with command-line arguments args and returns the
// exit status: 0, 1 for a failed computation, 2 for a bad command line (in
// which case nothing is written).
func (sc *Scenario) Main(args []string, stdout, stderr io.Writer) int {
	o, err := sc.Parse(args, stdout)
	if errors.Is(err, cli.ErrHelp) {
		return 0
	}
	if err != nil {
		fmt.Fprintln(stderr, strings.TrimPrefix(err.Error(), "usage: "))
		return 2
	}
	if err := sc.Run(o, stdout); err != nil {
		fmt.Fprintf(stderr, "%s: %v\n", sc.Name, err)
		return 1
	}
	return 0
}

// run is one refinement sequence.
type run struct {
	res *adapt.Result
	err []float64 // squared true error per triangle of the final mesh
}

// Run computes and writes the outputs.
func (sc *Scenario) Run(o Options, w io.Writer) error {
	m, err := sc.Mesh()
	if err != nil {
		return err
	}
	mode := "adaptive, Dörfler θ = " + fmt.Sprint(o.Theta)
	if o.Uniform {
		mode = "uniform refinement"
	}
	fmt.Fprintf(w, "%s\nP%d, %s estimator, %s, budget %d DOFs\n", sc.Title, o.Degree, o.Estimator, mode, o.MaxDOFs)
	head := fmt.Sprintf("%4s %9s %9s %11s %11s %7s %6s %8s %8s", "step", "triangles", "DOFs", "estimate", "true error", "effect.", "rate", "time", "error t")
	if o.Goal != nil {
		head += goalHeader()
	}
	fmt.Fprintln(w, head)
	var seen []adapt.Step
	var loopTime, errTime time.Duration
	print := func(s adapt.Step) error {
		seen = append(seen, s)
		rate := "-"
		if len(seen) >= 3 {
			if r, ok := fitted(seen[len(seen)/2:]); ok {
				rate = fmt.Sprintf("%.3f", r)
			}
		}
		t := s.SolveTime + s.EstimateTime + s.MarkTime + s.RefineTime
		loopTime += t
		errTime += s.ErrorTime
		row := fmt.Sprintf("%4d %9d %9d %11.4e %11.4e %7.3f %6s %8s %8s", s.Step, s.Triangles, s.DOFs, s.Estimate, s.Error, s.Effectivity, rate,
			t.Round(time.Millisecond), s.ErrorTime.Round(time.Millisecond))
		if o.Goal != nil {
			row += goalRow(s)
		}
		fmt.Fprintln(w, row)
		return nil
	}
	main, err := sc.loop(m, o, o.Uniform, print)
	if err != nil {
		return err
	}
	t0 := time.Now()
	other, err := sc.loop(m, o, !o.Uniform, nil)
	if err != nil {
		return err
	}
	otherTime := time.Since(t0)
	last := main.res.Steps[len(main.res.Steps)-1]
	fmt.Fprintf(w, "stopped: %v after %d steps; rate: the exponent r of error ≈ C N^(-r), fitted over the second half of the steps so far\n", main.res.Status, len(main.res.Steps))
	fmt.Fprintf(w, "time: the loop's own stages (solve, estimate, mark, refine), %v in all; error t: measuring the true error, %v in all, not part of the loop\n",
		loopTime.Round(time.Millisecond), errTime.Round(time.Millisecond))
	if o.Estimator == "equilibrated" {
		fmt.Fprintf(w, "the estimate is a guaranteed upper bound of the energy error of each step's returned solution (up to the quadrature of non-polynomial data); at the last step %.4e of it (%.2g%%) is the algebraic part, for the solve stopped early\n",
			last.Algebraic, 100*last.Algebraic/last.Estimate)
	}
	otherName := "uniform"
	if o.Uniform {
		otherName = "adaptive"
	}
	ol := other.res.Steps[len(other.res.Steps)-1]
	fmt.Fprintf(w, "also ran the %s refinement to the same budget for convergence.svg: %d steps to %d DOFs, error %.4e, in %v (true errors included)\n",
		otherName, len(other.res.Steps), ol.DOFs, ol.Error, otherTime.Round(time.Millisecond))
	fmt.Fprintln(w, "The estimate measures discretization error only, not modelling error; engineering use follows local codes and licensed practice.")
	adaptive, uniform := main, other
	if o.Uniform {
		adaptive, uniform = other, main
	}
	if err := os.MkdirAll(o.Out, 0o755); err != nil {
		return err
	}
	t0 = time.Now()
	if err := sc.write(o, main, adaptive.res.Steps, uniform.res.Steps); err != nil {
		return err
	}
	writeTime := time.Since(t0)
	files := []string{HistoryFile, MeshJSONFile, MeshVTUFile, MeshPNGFile, ConvergenceFile}
	if len(sc.Exact.Singular) > 0 {
		files = slices.Insert(files, 4, MeshZoomFile)
	}
	fmt.Fprintf(w, "wrote %s in %v (final mesh: %d triangles, %d DOFs)\n", filepath.Join(o.Out, "{"+strings.Join(files, ",")+"}"),
		writeTime.Round(time.Millisecond), last.Triangles, last.DOFs)
	return nil
}

// fitted returns the fitted rate of the true error of steps.
func fitted(steps []adapt.Step) (float64, bool) {
	var n, e []float64
	for _, s := range steps {
		n = append(n, float64(s.DOFs))
		e = append(e, s.Error)
	}
	r, _, err := estimate.FitRate(n, e)
	return r, err == nil
}

func (sc *Scenario) loop(m *mesh.Mesh, o Options, uniform bool, onStep func(adapt.Step) error) (run, error) {
	var marker adapt.Marker = adapt.Dorfler{Theta: o.Theta}
	if uniform {
		marker = adapt.Fraction{F: 1}
	}
	ex := sc.Exact
	res, err := adapt.Run(context.Background(),
		adapt.Problem{Mesh: m, Degree: o.Degree, Data: sc.Data, Exact: &ex},
		adapt.Settings{MaxDOFs: o.MaxDOFs, Tol: o.Tol, OnStep: onStep, AlgebraicFraction: 0.1},
		adapt.Method{Estimator: Estimators[o.Estimator], Marker: marker, Goal: o.Goal, MarkGoal: o.Goal != nil})
	if err != nil {
		return run{}, err
	}
	e2, _, err := estimate.TrueError(nil, res.Solution, ex, sc.Data)
	if err != nil {
		return run{}, err
	}
	return run{res: res, err: e2}, nil
}
