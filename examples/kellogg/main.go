// Command kellogg computes steady conduction in a composite plate: a square
// of four quadrants of two materials in a checkerboard, whose
// conductivities differ by a factor of about 161, by adaptive finite
// elements. The exact temperature is the checkerboard solution of Kellogg
// (1975) with γ = 0.1: u = r^γ μ(θ), singular at the centre where the four
// quadrants meet, so every step prints its true error beside the estimate.
//
// It has the flags and outputs of examples/lshape (default folder
// out/kellogg). Uniform refinement converges only like N^{-γ/2} = N^{-0.05};
// adaptive refinement recovers the rate N^{-p/2}.
//
// With -goal the loop also solves the dual problem of that goal functional
// (the mean over a box or a region, or the flux through the boundary edges
// of a tag), marks by the goal's indicators, prints the goal J(u_h), its
// estimate, its true error and the goal effectivity, and draws the goal
// error in convergence.svg.
//
// Usage:
//
//	go run ./examples/kellogg [-p 1|2] [-estimator residual|averaging|spr|equilibrated|flux]
//	    [-theta 0.5] [-max-dofs 20000] [-tol 0] [-out out/kellogg] [-uniform]
//	    [-goal box:X0,Y0,X1,Y1 | region:TAG | flux:TAG] [-picture 800] [-zoom X,Y,R]
//
// The estimate measures discretization error only, not modelling error;
// engineering use follows local codes and licensed practice.
package main

import "github.com/posteriori-fem/posteriori/examples/internal/scenario"

func main() { command().Exit() }

// command is the scenario of this example (the model problem kellogg of
// fem/known), new at each call.
func command() *scenario.Scenario {
	return scenario.Model("kellogg",
		"Composite plate, checkerboard of conductivities 161.4 and 1, exact solution of Kellogg (γ = 0.1)",
		20000, scenario.Slope{Exponent: -0.5, Label: "N^-1/2"}, scenario.Slope{Exponent: -0.05, Label: "N^-0.05"})
}
