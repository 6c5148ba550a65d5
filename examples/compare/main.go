// Command compare is the effectivity study: what to run to choose an error
// estimator for a class of problems. It is a command-line front end to
// package adapt/study, which a program of one's own can call with its own
// estimators, on the model problems of package fem/known. For each model
// problem of the suite,
// each estimator and each degree p, it runs the adaptive loop of package
// adapt (solve, estimate, Dörfler marking with parameter θ, refinement)
// from the problem's coarse mesh until the next mesh would exceed a DOF
// budget. Every problem has a known exact solution, so each step records
// the true energy error ‖a^½ ∇(u − u_h)‖ beside the estimate η and the
// effectivity index η / ‖a^½ ∇(u − u_h)‖.
//
// The suite:
//
//	smooth   u = sin(πx) sin(πy) on the unit square (2×2 cells)
//	lshape   u = r^(2/3) sin(2θ/3) on the L-shaped domain, re-entrant corner
//	slit     u = r^(1/2) sin(θ/2) on the slit square, crack tip
//	kellogg  checkerboard diffusion of contrast 161 on (−1,1)², u = r^0.1 μ(θ)
//	peak     a Gaussian peak exp(−1000 r²) on the unit square (4×4 cells)
//	layer    a boundary layer exp(−x/0.01) + y on the unit square (4×4 cells)
//
// and the estimators: residual (estimate.Residual), averaging and spr
// (estimate.Recovery with gradient recovery by area-weighted averaging or
// by superconvergent patch recovery), each for P1 and P2.
//
// # Output
//
// The program prints one row per (problem, estimator, p), and writes the
// same rows to results.csv in the output folder, with the header
//
//	problem,estimator,p,steps,dofs,effectivity,eff_min,eff_max,error_rate,estimate_rate
//
// where
//
//	steps          the number of solved meshes (adaptive steps)
//	dofs           the DOFs of the last mesh (Dirichlet nodes included)
//	effectivity    η / error at the last step
//	eff_min        the smallest and largest effectivity over the steps after
//	eff_max          the first 3 (over all steps if there are no more)
//	error_rate     r in error ≈ c N^(−r), fitted (estimate.FitRate) to the
//	                 (DOFs, error) of the second half of the steps
//	estimate_rate  the same for the estimate η
//
// Rates are NaN when fewer than two steps were solved. The CSV files carry
// numbers in the shortest form that reads back exactly; the table rounds
// them to three decimals.
//
// steps.csv has one row per step of every run, with the header
//
//	problem,estimator,p,step,dofs,estimate,error,effectivity
//
// and effectivity.svg draws the effectivity against the DOFs (log scales),
// one line per (estimator, p): one panel per problem of the run, or only
// the problem named by -plot.
//
// # Reading the table
//
// An estimator that tracks the error has an effectivity range
// [eff_min, eff_max] that is narrow and stays away from zero, and an
// estimate_rate equal to the error_rate; an effectivity near 1 means it
// also gets the size of the error right, not only its decay. The
// error_rate shows whether the estimator's indicators steer the
// refinement well: with optimal meshes the energy error of degree p
// decays like N^(−p/2), also for the singular problems.
//
// # Caution
//
// The effectivity measures how well an estimator tracks the
// discretization error on these model problems only, with their exact
// solutions; it does not carry over unchecked to other problems. No
// estimator covers modelling error (wrong geometry, coefficients, loads
// or boundary conditions, or a model that does not describe the
// physics). Engineering use of the results follows the local codes and
// licensed professional practice.
//
// Usage:
//
//	go run ./examples/compare [-theta 0.5] [-max-dofs N] [-problems smooth,lshape,...]
//	    [-estimators residual,averaging,spr,equilibrated,flux] [-p 1,2] [-plot all|PROBLEM] [-out out/compare]
//
// Bad flag values print one line on standard error and exit with status 2,
// writing nothing. All files are written atomically: a failed run never
// leaves a partial file.
package main

import (
	"context"
	"encoding/csv"
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"slices"
	"strconv"
	"strings"
	"time"

	"github.com/posteriori-fem/posteriori/adapt/study"
	"github.com/posteriori-fem/posteriori/examples/internal/cli"
	"github.com/posteriori-fem/posteriori/fem/known"

	"github.com/posteriori-fem/posteriori/mesh"
)

// defaultMaxDOFs is the default DOF budget of each run, chosen so that the
// whole default study takes well under a minute on two cores.
const defaultMaxDOFs = 20000

func main() {
	os.Exit(run(os.Stdout, os.Stderr, os.Args[1:]))
}

// run runs the study with the command-line arguments args and returns the
// exit status: 0 on success, 1 when a run or a write fails, 2 for bad
// arguments.
func run(stdout, stderr io.Writer, args []string) int {
	c, out, plotWhich, err := parseArgs(stdout, args)
	if errors.Is(err, cli.ErrHelp) {
		return 0
	}
	if err != nil {
		fmt.Fprintln(stderr, "compare:", err)
		return 2
	}
	start := time.Now()
	sums, err := study.Run(context.Background(), c)
	if err != nil {
		fmt.Fprintln(stderr, "compare:", err)
		return 1
	}
	elapsed := time.Since(start)
	fmt.Fprintf(stdout, "effectivity study: Dörfler θ = %g, at most %d DOFs per run, %d runs in %.1f s\n\n",
		c.Theta, c.MaxDOFs, len(sums), elapsed.Seconds())
	writeTable(stdout, sums)
	if err := writeOutputs(out, plotWhich, sums); err != nil {
		fmt.Fprintln(stderr, "compare:", err)
		return 1
	}
	fmt.Fprintf(stdout, "\nwrote %s, %s and %s\n", filepath.Join(out, "results.csv"),
		filepath.Join(out, "steps.csv"), filepath.Join(out, "effectivity.svg"))
	return 0
}

// parseArgs parses and checks the arguments and makes the output folder.
// For -h it prints the usage on stdout and returns cli.ErrHelp; other
// errors are for the caller to print.
func parseArgs(stdout io.Writer, args []string) (c study.Config, out, plotWhich string, err error) {
	fs := flag.NewFlagSet("compare", flag.ContinueOnError)
	theta := fs.Float64("theta", 0.5, "Dörfler marking parameter θ, in (0, 1]")
	maxDOFs := fs.Int("max-dofs", defaultMaxDOFs, cli.BudgetHelp+", per run")
	probs := fs.String("problems", names(known.Suite(), func(p known.Case) string { return p.Name }), "problems to run, comma-separated")
	ests := fs.String("estimators", names(study.Estimators(), func(e study.Estimator) string { return e.Name }), "estimators to run, comma-separated")
	ps := fs.String("p", "1,2", "polynomial degrees to run, comma-separated, 1 or 2")
	fs.StringVar(&plotWhich, "plot", "all", `problem drawn in effectivity.svg, or "all" for one panel per problem`)
	fs.StringVar(&out, "out", filepath.Join("out", "compare"), "output folder (created if missing)")
	var about strings.Builder
	about.WriteString("The effectivity study of the error estimators on model problems with known solutions.\n\nproblems:\n")
	for _, p := range known.Suite() {
		fmt.Fprintf(&about, "  %-8s %s\n", p.Name, p.About)
	}
	about.WriteString("estimators:\n")
	for _, e := range study.Estimators() {
		fmt.Fprintf(&about, "  %-12s %s\n", e.Name, e.About)
	}
	if err := cli.Parse(fs, args, "compare [flags]", about.String(), stdout); err != nil {
		return c, "", "", err
	}
	c.Theta, c.MaxDOFs = *theta, *maxDOFs
	if !(c.Theta > 0 && c.Theta <= 1) {
		return c, "", "", fmt.Errorf("-theta %g: want 0 < θ ≤ 1", c.Theta)
	}
	if err := cli.Budget(c.MaxDOFs); err != nil {
		return c, "", "", err
	}
	if c.Cases, err = pick("-problems", *probs, known.Suite(), func(p known.Case) string { return p.Name }); err != nil {
		return c, "", "", err
	}
	if c.Estimators, err = pick("-estimators", *ests, study.Estimators(), func(e study.Estimator) string { return e.Name }); err != nil {
		return c, "", "", err
	}
	if c.Degrees, err = pick("-p", *ps, []int{1, 2}, strconv.Itoa); err != nil {
		return c, "", "", err
	}
	if plotWhich != "all" {
		if !slices.ContainsFunc(c.Cases, func(p known.Case) bool { return p.Name == plotWhich }) {
			return c, "", "", fmt.Errorf("-plot %q: want \"all\" or one of the problems run (%s)", plotWhich, names(c.Cases, func(p known.Case) string { return p.Name }))
		}
	}
	if err := cli.CheckOut(out); err != nil {
		return c, "", "", err
	}
	return c, out, plotWhich, nil
}

// names returns the names of all, comma-separated.
func names[T any](all []T, name func(T) string) string {
	s := make([]string, len(all))
	for i, v := range all {
		s[i] = name(v)
	}
	return strings.Join(s, ",")
}

// pick returns the elements of all named in the comma-separated list, in
// the order of all. An unknown or repeated name, or an empty list, is an
// error that names the flag.
func pick[T any](flagName, list string, all []T, name func(T) string) ([]T, error) {
	want := map[string]bool{}
	for _, n := range strings.Split(list, ",") {
		n = strings.TrimSpace(n)
		found := false
		for _, v := range all {
			found = found || name(v) == n
		}
		switch {
		case n == "":
			return nil, fmt.Errorf("%s %q: empty name; want a comma-separated list of %s", flagName, list, names(all, name))
		case !found:
			return nil, fmt.Errorf("%s: unknown %q; want one of %s", flagName, n, names(all, name))
		case want[n]:
			return nil, fmt.Errorf("%s: %q given twice", flagName, n)
		}
		want[n] = true
	}
	var picked []T
	for _, v := range all {
		if want[name(v)] {
			picked = append(picked, v)
		}
	}
	return picked, nil
}

// resultsHeader and stepsHeader are the headers of results.csv and
// steps.csv, as documented in the package comment.
var (
	resultsHeader = []string{"problem", "estimator", "p", "steps", "dofs", "effectivity", "eff_min", "eff_max", "error_rate", "estimate_rate"}
	stepsHeader   = []string{"problem", "estimator", "p", "step", "dofs", "estimate", "error", "effectivity"}
)

// writeTable prints the summaries as a table with aligned columns: names
// left-aligned, numbers right-aligned.
func writeTable(w io.Writer, sums []study.Summary) {
	rows := [][]string{resultsHeader}
	for _, s := range sums {
		f := func(v float64) string { return fmt.Sprintf("%.3f", v) }
		rows = append(rows, []string{
			s.Case.Name, s.Estimator.Name, strconv.Itoa(s.Degree), strconv.Itoa(len(s.Steps)), strconv.Itoa(s.DOFs()),
			f(s.Effectivity), f(s.EffMin), f(s.EffMax), f(s.ErrorRate), f(s.EstimateRate),
		})
	}
	width := make([]int, len(resultsHeader))
	for _, r := range rows {
		for j, v := range r {
			width[j] = max(width[j], len([]rune(v)))
		}
	}
	for _, r := range rows {
		var b strings.Builder
		for j, v := range r {
			if j > 0 {
				b.WriteString("  ")
			}
			pad := strings.Repeat(" ", width[j]-len([]rune(v)))
			if j < 2 { // problem, estimator
				b.WriteString(v + pad)
			} else {
				b.WriteString(pad + v)
			}
		}
		fmt.Fprintln(w, strings.TrimRight(b.String(), " "))
	}
}

// writeOutputs creates the folder out and writes results.csv, steps.csv
// and effectivity.svg into it, each atomically.
func writeOutputs(out, plotWhich string, sums []study.Summary) error {
	if err := os.MkdirAll(out, 0o755); err != nil {
		return err
	}
	if err := mesh.WriteFile(filepath.Join(out, "results.csv"), func(w io.Writer) error { return writeResults(w, sums) }); err != nil {
		return err
	}
	if err := mesh.WriteFile(filepath.Join(out, "steps.csv"), func(w io.Writer) error { return writeSteps(w, sums) }); err != nil {
		return err
	}
	return mesh.WriteFile(filepath.Join(out, "effectivity.svg"), func(w io.Writer) error { return writePlot(w, sums, plotWhich) })
}

// num formats v in the shortest form that reads back exactly.
func num(v float64) string { return strconv.FormatFloat(v, 'g', -1, 64) }

// writeResults writes results.csv: one row per run.
func writeResults(w io.Writer, sums []study.Summary) error {
	cw := csv.NewWriter(w)
	cw.Write(resultsHeader)
	for _, s := range sums {
		cw.Write([]string{
			s.Case.Name, s.Estimator.Name, strconv.Itoa(s.Degree), strconv.Itoa(len(s.Steps)), strconv.Itoa(s.DOFs()),
			num(s.Effectivity), num(s.EffMin), num(s.EffMax), num(s.ErrorRate), num(s.EstimateRate),
		})
	}
	cw.Flush()
	return cw.Error()
}

// writeSteps writes steps.csv: one row per step of every run.
func writeSteps(w io.Writer, sums []study.Summary) error {
	cw := csv.NewWriter(w)
	cw.Write(stepsHeader)
	for _, s := range sums {
		for _, st := range s.Steps {
			cw.Write([]string{
				s.Case.Name, s.Estimator.Name, strconv.Itoa(s.Degree), strconv.Itoa(st.Step), strconv.Itoa(st.DOFs),
				num(st.Estimate), num(st.Error), num(st.Effectivity),
			})
		}
	}
	cw.Flush()
	return cw.Error()
}
