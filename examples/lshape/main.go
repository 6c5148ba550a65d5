// Command lshape computes steady heat conduction in the cross-section of an
// L-shaped bracket, whose re-entrant corner concentrates the heat flux, by
// adaptive finite elements. The temperature u = r^{2/3} sin(2θ/3) is known
// exactly, so every step prints its true error beside the estimate.
//
// With no flags it runs the solve–estimate–mark–refine loop with P1
// elements, the residual estimator and Dörfler marking (θ = 0.5) to a
// budget of 40,000 DOFs, prints one row per step, and writes into -out
// (default out/lshape):
//
//	history.csv      the step records (header: adapt.CSVHeader)
//	mesh.json        the final mesh with vertex field u (and, with -p 2, its edge
//	                 values), triangle fields eta and err (mesh.ReadJSON reads it)
//	mesh.vtu         the same for viewers (VTK XML, zlib-compressed binary;
//	                 quadratic cells with -p 2; mesh.ReadVTU reads it)
//	mesh.png         the final mesh coloured by η_T on a log scale (800 pixels wide)
//	mesh-zoom.png    the same around the re-entrant corner, in the square
//	                 that holds half of the triangles
//	convergence.svg  true error and estimate against DOFs, adaptive and uniform
//
// The corner limits uniform refinement to error ≈ N^{-1/3}; adaptive
// refinement recovers the rate N^{-p/2} of smooth solutions.
//
// With -goal the loop also solves the dual problem of that goal functional
// (the mean over a box or a region, or the flux through the boundary edges
// of a tag), marks by the goal's indicators, prints the goal J(u_h), its
// estimate, its true error and the goal effectivity, and draws the goal
// error in convergence.svg.
//
// Usage:
//
//	go run ./examples/lshape [-p 1|2] [-estimator residual|averaging|spr|equilibrated|flux]
//	    [-theta 0.5] [-max-dofs 40000] [-tol 0] [-out out/lshape] [-uniform]
//	    [-goal box:X0,Y0,X1,Y1 | region:TAG | flux:TAG] [-picture 800] [-zoom X,Y,R]
//
// The estimate measures discretization error only, not modelling error;
// engineering use follows local codes and licensed practice.
package main

import "github.com/posteriori-fem/posteriori/examples/internal/scenario"

func main() { command().Exit() }

// command is the scenario of this example (the model problem lshape of
// fem/known), new at each call.
func command() *scenario.Scenario {
	return scenario.Model("lshape",
		"L-shaped bracket, steady heat conduction, temperature u = r^(2/3) sin(2θ/3)",
		40000, scenario.Slope{Exponent: -0.5, Label: "N^-1/2"}, scenario.Slope{Exponent: -1.0 / 3, Label: "N^-1/3"})
}
