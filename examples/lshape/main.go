// Command lshape solves steady heat conduction in the cross-section of an
// L-shaped bracket, whose re-entrant corner concentrates the heat flux. The
// temperature u = r^{2/3} sin(2θ/3) is known exactly, so the program prints
// the true error of the finite element solution on a sequence of uniformly
// refined meshes, and the convergence rate against the number of DOFs N.
//
// The corner singularity limits the rate of the energy error to N^{-1/3}
// whatever the degree, where a smooth solution would give N^{-p/2}.
//
// Usage:
//
//	go run ./examples/lshape [-p 1|2] [-levels 6] [-n 2]
package main

import (
	"flag"
	"fmt"
	"io"
	"math"
	"os"
	"time"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/problems"
	"github.com/posteriori-fem/posteriori/mesh"
)

func main() {
	fs := flag.NewFlagSet("lshape", flag.ContinueOnError)
	p := fs.Int("p", 1, "polynomial degree, 1 or 2")
	levels := fs.Int("levels", 6, "number of uniform refinements, 1 to 9")
	n := fs.Int("n", 2, "cells per unit length of the coarsest mesh, 1 to 64")
	if err := fs.Parse(os.Args[1:]); err != nil {
		os.Exit(2)
	}
	switch {
	case *p != 1 && *p != 2:
		fmt.Fprintf(os.Stderr, "lshape: -p %d: want 1 or 2\n", *p)
		os.Exit(2)
	case *levels < 1 || *levels > 9:
		fmt.Fprintf(os.Stderr, "lshape: -levels %d: want 1 to 9\n", *levels)
		os.Exit(2)
	case *n < 1 || *n > 64:
		fmt.Fprintf(os.Stderr, "lshape: -n %d: want 1 to 64\n", *n)
		os.Exit(2)
	}
	if err := run(os.Stdout, *p, *levels, *n); err != nil {
		fmt.Fprintln(os.Stderr, "lshape:", err)
		os.Exit(1)
	}
}

func run(w io.Writer, p, levels, n int) error {
	ex, prob := problems.LShape()
	m, err := mesh.LShape(n)
	if err != nil {
		return err
	}
	fmt.Fprintf(w, "L-shaped bracket, u = r^(2/3) sin(2θ/3), P%d, uniform refinement\n", p)
	fmt.Fprintf(w, "%5s %9s %9s %12s %12s %7s %6s %9s\n", "level", "triangles", "DOFs", "energy err", "L2 err", "rate", "iters", "time")
	var prevN, prevE float64
	for level := range levels {
		if level > 0 {
			if m, _, err = m.RefineUniform(); err != nil {
				return err
			}
		}
		start := time.Now()
		s, err := fem.NewSpace(m, p)
		if err != nil {
			return err
		}
		u, stats, err := fem.Solve(s, prob)
		if err != nil {
			return err
		}
		_, e, err := u.Error(nil, ex, prob)
		if err != nil {
			return err
		}
		dofs := float64(s.NumDOF())
		rate := "-"
		if level > 0 {
			rate = fmt.Sprintf("%.3f", -math.Log(e.Energy/prevE)/math.Log(dofs/prevN))
		}
		fmt.Fprintf(w, "%5d %9d %9d %12.4e %12.4e %7s %6d %9s\n", level, m.NumTriangles(), s.NumDOF(),
			e.Energy, e.L2, rate, stats.Iterations, time.Since(start).Round(time.Millisecond))
		prevN, prevE = dofs, e.Energy
	}
	fmt.Fprintln(w, "rate: the exponent r of energy err ≈ C N^(-r); the corner limits it to 1/3")
	return nil
}
