// Command coolant computes the steady temperature in the cross-section of
// a cooled part by adaptive finite elements and reports how large the
// discretization error of what it computes is.
//
// The scenario is our own, with invented demo values (they describe no
// real product or material): a ceramic-like body (conductivity 2 W/(m·K))
// holds an L-shaped copper-like insert (400 W/(m·K), a contrast of 200)
// that heats by 2e6 W/m³, as a current-carrying bar would. A circular
// coolant channel in the body takes the heat away by convection,
//
//	a∇T·n + h_c T = h_c T_c   on the channel wall (Robin: α = h_c, g = h_c T_c),
//
// with h_c = 5000 W/(m²·K) and T_c = 20 °C; the bottom face sits on a
// plate held at 40 °C (Dirichlet) and the other faces are insulated
// (a∇T·n = 0). The body has a notch whose re-entrant corner, and the
// insert has corners (one of them re-entrant) where the conductivity jumps,
// so the temperature gradient is singular there. There is no exact solution.
//
// The geometry is plain data at the top of this file (points in mm,
// segments with their boundary tags, the channels as circles, one seed
// point per material); see "Your own geometry" in the README.
//
// The loop solves with P1 (or P2) elements, estimates the error with the
// equilibrated-flux estimator (a guaranteed upper bound η of the energy
// error of the computed solution, algebraic error included), marks by
// Dörfler's rule (θ = 0.5) and refines, until η ≤ rel-tol·|||T_h||| or the
// DOF budget is reached. Every solve runs to the solver's own tolerance
// (the loop's nested-iteration shortcut is off), because the goals below
// would otherwise carry the algebraic error at the energy rate.
//
// Each step prints the DOFs, η with its algebraic part, the energy norm
// |||T_h||| and η/|||T_h|||, and two goals with their dual weighted residual
// estimates of J(T) − J(T_h): the mean temperature of the insert
// (fem.RegionMean) and the heat flowing into the coolant through the
// channel wall, per metre of depth (minus fem.Flux through the channel's
// tag, whose sign convention is heat entering the part). The loop takes
// one goal at a time (adapt.Method.Goal); this command marks by η, whose
// stop rule it uses, and evaluates both goals at every step by solving
// their two dual problems on the step's mesh (fem.Prepared.Dual, one
// assembly and multigrid setup per step) and estimate.DualWeighted. The
// goal estimates are estimates, not bounds; η is a bound.
//
// The default run (go run ./examples/coolant: P1, rel-tol 1e-2, budget
// 200000 DOFs) stops by the relative tolerance after 18 steps:
//
//	step     DOFs        eta   eta_alg  |||T_h|||  eta/norm  T_insert       ±est Q_channel       ±est
//	   0      378 3.8813e+01  3.97e-08 3.1427e+02 1.235e-01   88.1860   3.95e-01   351.147  -3.46e+00
//	  17    21262 2.9271e+00  1.08e-07 3.1561e+02 9.274e-03   89.6662   2.76e-03   345.609  -4.61e-02
//
// with the heat balance source 576 W/m = coolant 345.6092 + cold plate
// 230.3908 W/m (difference −9.3e-10), in 1.66, 1.68 and 1.73 s of wall
// time (median 1.68 s; three runs of the built binary on a shared two-core
// machine, load average 3.6) and at most 75,984 kB resident.
//
// The errors that the estimates leave out: η and the goal estimates are
// those of the discrete problem on the mesh's domain, whose channel wall
// is the polygon of its edges (refinement moves new wall vertices onto the
// circle, so that domain changes from step to step). That geometry error
// is in no estimate here. On the P2 loop (-p 2 -rel-tol 1e-4 -max-dofs
// 60000) the heat into the coolant rose from 345.03 W/m (step 14, 3,114
// DOFs) to 345.54 W/m (step 28, 55,931 DOFs) while the goal estimates
// stayed between 7e-5 and 7e-3 W/m in size; the P1 values of the default run,
// corrected by their estimates (89.6690 °C and 345.5630 W/m), differ from
// that last P2 step (89.6771 °C, 345.5439 W/m) by 0.008 °C and 0.019 W/m.
// Starting from a finer wall does not remove the effect: with 32 initial
// edges on the wall the P2 flux still moved by 0.31 W/m. Judge the goals by
// their change under refinement as well as by their estimates.
//
// The tests (go test -v ./examples/coolant) check the heat balance against
// q·|insert| from the shoelace formula (off by 4.8e-9 and 5.2e-9 W/m of 576
// for P1 and P2), and η against a reference solution (P2 on the step's
// mesh refined uniformly three times): η/|||T_ref − T_h||| = 1.160, 1.104
// (P1, steps 0 and 4) and 1.229, 1.221 (P2, steps 0 and 2).
//
// Output files in -out (default out/coolant), checked before computing:
// history.csv (the loop's records, adapt.WriteCSV), goals.csv (the goals
// per step), mesh.vtu (temperature T and indicators eta per triangle),
// mesh.png (the final mesh coloured by η_T), mesh-zoom.png (around the
// re-entrant corner of the insert) and temperature.png.
//
// Caution: η and the goal estimates measure the discretization error of
// the finite element solution of this model only — not modelling error
// (geometry, conductivities, heat transfer coefficient, source, boundary
// conditions, or whether steady 2D conduction describes the part). Design
// follows local codes and licensed professional practice.
//
// Usage:
//
//	go run ./examples/coolant [-p 1|2] [-rel-tol 0.01] [-max-dofs 200000] [-out out/coolant]
package main

import "os"

// ---------------------------------------------------------------------
// The geometry. Lengths in millimetres (the program converts to metres).
// Change the numbers below to change the part; Triangulate reports
// crossing segments, points outside the part and the like with a located
// error.
// ---------------------------------------------------------------------

// Boundary tags: what happens on each side.
const (
	tagInterface = 0 // between the materials (no condition)
	tagBase      = 1 // held at baseTemperature (Dirichlet)
	tagInsulated = 2 // no heat flows through it (Neumann 0)
	tagChannel   = 3 // convective cooling into the coolant (Robin)
)

// Region tags: the materials.
const (
	regionBody   = 1
	regionInsert = 2
)

// points are the corners of the straight outlines, as x, y pairs in mm.
var points = []float64{
	// The body, counter-clockwise: a 60 × 40 block with a notch cut
	// from its top right corner.
	0, 0, // 0: bottom left
	60, 0, // 1: bottom right
	60, 24, // 2
	44, 24, // 3: re-entrant corner of the notch
	44, 40, // 4
	0, 40, // 5: top left
	// The insert, counter-clockwise: an L of two bars 22 × 8 and 8 × 14.
	8, 10, // 6
	30, 10, // 7
	30, 18, // 8
	16, 18, // 9: re-entrant corner of the insert
	16, 32, // 10
	8, 32, // 11
}

// segments join two points (indices into points) and carry a boundary tag.
var segments = []segment{
	{0, 1, tagBase}, // bottom face, on the cold plate
	{1, 2, tagInsulated},
	{2, 3, tagInsulated},
	{3, 4, tagInsulated},
	{4, 5, tagInsulated},
	{5, 0, tagInsulated},
	{6, 7, tagInterface}, // the insert's outline
	{7, 8, tagInterface},
	{8, 9, tagInterface},
	{9, 10, tagInterface},
	{10, 11, tagInterface},
	{11, 6, tagInterface},
}

// channels are the coolant channels: circles of centre (X, Y) and radius
// R in mm, each a hole in the body whose wall carries tagChannel. They
// must lie inside the body and must not touch the insert or each other.
var channels = []channel{
	{X: 40, Y: 12, R: 4},
}

// seeds are one point inside each material, with its region tag.
var seeds = []seed{
	{X: 2, Y: 2, Region: regionBody},
	{X: 10, Y: 12, Region: regionInsert},
}

// initialSize is the longest edge of the initial mesh, in mm.
const initialSize = 4

// ---------------------------------------------------------------------
// The physics (demo values, SI units: W, m, K, °C).
// ---------------------------------------------------------------------

// materials give the conductivity (W/(m·K)) and heat source (W/m³) of
// each region.
var materials = map[int32]material{
	regionBody:   {Name: "body", K: 2},
	regionInsert: {Name: "insert", K: 400, Q: 2e6},
}

const (
	baseTemperature    = 40   // °C on tagBase
	coolantTemperature = 20   // °C of the coolant
	heatTransfer       = 5000 // h_c, W/(m²·K), on the channel wall
)

type segment struct {
	A, B int32 // point indices
	Tag  int32 // boundary tag
}

type channel struct{ X, Y, R float64 }

type seed struct {
	X, Y   float64
	Region int32
}

type material struct {
	Name string
	K    float64 // conductivity, W/(m·K)
	Q    float64 // heat source, W/m³
}

func main() { os.Exit(run(os.Args[1:], os.Stdout, os.Stderr)) }
