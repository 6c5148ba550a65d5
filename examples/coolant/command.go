package main

import (
	"context"
	"errors"
	"flag"
	"fmt"
	"io"
	"path/filepath"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/examples/internal/cli"
	"github.com/posteriori-fem/posteriori/fem"
)

// options are the command's flags.
type options struct {
	Degree  int
	RelTol  float64
	MaxDOFs int
	Out     string
}

// theta is the Dörfler marking parameter.
const theta = 0.5

const about = `Steady conduction in the cross-section of a cooled part (demo data): a
copper-like insert heated by a source, in a ceramic-like body with a
convectively cooled channel. Adaptive finite elements to a relative
tolerance on the guaranteed (equilibrated) bound η, with the mean
temperature of the insert and the heat into the channel and their
estimated errors. Edit the geometry at the top of main.go.

These are discretization errors of the model only; design follows local
codes and licensed practice.`

// run is the program: it parses args, prints to stdout and stderr, and
// returns the exit status: 0 on success, 1 if the computation fails, 2
// for bad arguments or an output folder that cannot be written.
func run(args []string, stdout, stderr io.Writer) int {
	fs := flag.NewFlagSet("coolant", flag.ContinueOnError)
	var o options
	fs.IntVar(&o.Degree, "p", 1, "polynomial degree, 1 or 2")
	fs.Float64Var(&o.RelTol, "rel-tol", 1e-2, "stop once the bound η ≤ rel-tol × |||T_h|||, in (0, 1)")
	fs.IntVar(&o.MaxDOFs, "max-dofs", 200000, cli.BudgetHelp)
	fs.StringVar(&o.Out, "out", filepath.Join("out", "coolant"), "output folder")
	if err := cli.Parse(fs, args, "coolant [flags]", about, stdout); err != nil {
		if errors.Is(err, cli.ErrHelp) {
			return 0
		}
		fmt.Fprintln(stderr, "coolant:", err)
		return 2
	}
	if err := o.check(); err != nil {
		fmt.Fprintln(stderr, "coolant:", err)
		return 2
	}
	if err := cli.CheckOut(o.Out); err != nil {
		fmt.Fprintln(stderr, "coolant:", err)
		return 2
	}
	if err := report(stdout, o); err != nil {
		fmt.Fprintln(stderr, "coolant:", err)
		return 1
	}
	return 0
}

func (o options) check() error {
	if o.Degree != 1 && o.Degree != 2 {
		return fmt.Errorf("-p %d: want 1 or 2", o.Degree)
	}
	if !(o.RelTol > 0 && o.RelTol < 1) { // also rejects NaN
		return fmt.Errorf("-rel-tol %g: want a value in (0, 1)", o.RelTol)
	}
	return cli.Budget(o.MaxDOFs)
}

// outcome is what compute returns: the loop's result and the goals at
// each step.
type outcome struct {
	Res   *adapt.Result
	Goals [][]goalValue // per step, in the order of goals()
	Base  goalValue     // heat into the cold plate (minus the flux through tagBase), final step
	Heat  float64       // the total source ∫q, W/m
}

// compute runs the adaptive loop. onStep, if not nil, sees each step's
// data and goals (read-only) as the step ends.
func compute(o options, onStep func(adapt.StepData, []goalValue) error) (*outcome, error) {
	m0, err := initialMesh()
	if err != nil {
		return nil, err
	}
	p := problem()
	gs := goals()
	out := &outcome{}
	_, out.Heat = heatedArea(m0)
	res, err := adapt.Run(context.Background(),
		adapt.Problem{Mesh: m0, Degree: o.Degree, Data: p},
		adapt.Settings{
			RelTol:            o.RelTol,
			MaxDOFs:           o.MaxDOFs,
			AlgebraicFraction: -1, // every solve to the solver's tolerance (see the package doc)
			OnStepData: func(sd adapt.StepData) error {
				v, err := evaluate(sd.Solution, p, gs)
				if err != nil {
					return fmt.Errorf("goals: %w", err)
				}
				out.Goals = append(out.Goals, v)
				if onStep != nil {
					return onStep(sd, v)
				}
				return nil
			},
		},
		adapt.Method{Estimator: estimate.Equilibrated{}, Marker: adapt.Dorfler{Theta: theta}},
	)
	if err != nil {
		return nil, err
	}
	out.Res = res
	b, err := evaluate(res.Solution, p, []goal{{Name: "Q_base", J: fem.Flux{Tag: tagBase}, Scale: -1}})
	if err != nil {
		return nil, err
	}
	out.Base = b[0]
	return out, nil
}

// report runs the loop, prints a row per step and the summary, and writes
// the files.
func report(w io.Writer, o options) error {
	if _, err := initialMesh(); err != nil { // a mistake in the geometry, before the header
		return err
	}
	k := materials[regionInsert].K / materials[regionBody].K
	fmt.Fprintf(w, "cooled part (demo data): conductivities %g and %g W/(m·K) (contrast %.4g), source %.4g W/m³ in the insert\n",
		materials[regionBody].K, materials[regionInsert].K, k, materials[regionInsert].Q)
	fmt.Fprintf(w, "P%d, equilibrated bound, Dörfler θ = %g, rel-tol %g, budget %d DOFs\n", o.Degree, theta, o.RelTol, o.MaxDOFs)
	fmt.Fprintf(w, "%4s %8s %10s %9s %10s %9s %9s %10s %9s %10s\n",
		"step", "DOFs", "eta", "eta_alg", "|||T_h|||", "eta/norm", "T_insert", "±est", "Q_channel", "±est")
	res, err := compute(o, func(sd adapt.StepData, v []goalValue) error {
		s := sd.Step
		_, err := fmt.Fprintf(w, "%4d %8d %10.4e %9.2e %10.4e %9.3e %9.4f %10.2e %9.3f %10.2e\n",
			s.Step, s.DOFs, s.Estimate, s.Algebraic, s.EnergyNorm, s.Estimate/s.EnergyNorm,
			v[0].Value, v[0].Estimate, v[1].Value, v[1].Estimate)
		return err
	})
	if err != nil {
		return err
	}
	steps := res.Res.Steps
	last := steps[len(steps)-1]
	g := res.Goals[len(res.Goals)-1]
	fmt.Fprintf(w, "stopped: %s after %d steps; η/|||T_h||| = %.3g at %d DOFs\n",
		res.Res.Status, len(steps), last.Estimate/last.EnergyNorm, last.DOFs)
	fmt.Fprintf(w, "mean temperature of the insert: %.4f °C, estimated error %+.2e °C (the corrected value %.4f °C)\n",
		g[0].Value, g[0].Estimate, g[0].Value+g[0].Estimate)
	fmt.Fprintf(w, "heat into the coolant: %.4f W/m, estimated error %+.2e W/m (the corrected value %.4f W/m)\n",
		g[1].Value, g[1].Estimate, g[1].Value+g[1].Estimate)
	fmt.Fprintf(w, "heat balance: source %.4f W/m = coolant %.4f + cold plate %.4f W/m (difference %.2e)\n",
		res.Heat, g[1].Value, res.Base.Value, res.Heat-g[1].Value-res.Base.Value)
	fmt.Fprintln(w, "caution: these are estimates of the discretization error of this model only, not of modelling error;")
	fmt.Fprintln(w, "design follows local codes and licensed professional practice.")
	if err := write(o.Out, res); err != nil {
		return err
	}
	fmt.Fprintf(w, "wrote %s\n", o.Out)
	return nil
}
