// Package estimate computes per-element a posteriori error indicators from
// a discrete solution of package fem, and the measurements (true errors,
// effectivity indices, convergence rates) that tell whether to trust them.
//
// An Estimator maps a discrete solution u_h and its problem
//
//	−∇·(a∇u) + c u = f,  u = g_D on Γ_D,  a∇u·n = g_N on Γ_N
//
// to Indicators: η_T² per triangle, with the total η = (Σ η_T²)^½, and the
// data oscillation osc_T² = h_T² ‖f − Π_{p−1} f‖²_T on its own, where Π_{p−1}
// is the L² projection onto polynomials of degree p − 1 on T (the mean for
// P1, the linear part for P2).
//
// Residual is the explicit residual estimator
//
//	η_T² = h_T²/a_T ‖f + ∇·(a∇u_h) − c u_h‖²_T
//	       + ½ Σ_{interior E ⊂ ∂T} h_E/a_E ‖[[a∇u_h·n]]‖²_E
//	       + Σ_{Neumann E ⊂ ∂T} h_E/a_T ‖g_N − a∇u_h·n‖²_E,
//
// which for a = 1 is the formula of the library's design notes; the weights
// a_T, a_E make it measure the energy norm whatever the size and contrast of
// a. Recovery is the gradient recovery estimator
//
//	η_T² = ‖a^½ (G(u_h) − ∇u_h)‖²_T
//
// with G(u_h) recovered in the Lagrange space of u_h by area-weighted
// averaging or by the superconvergent patch recovery (SPR) of Zienkiewicz
// and Zhu.
//
// Equilibrated is the equilibrated-flux estimator (Prager–Synge): its
// total is a guaranteed upper bound of the energy error, with no unknown
// constant, for any contrast of a piecewise-constant diffusion, and it
// includes the error of an inexactly solved u_h. FluxRecovery projects the
// flux −a∇u_h onto Raviart–Thomas fields (Cai and Zhang): cheaper than
// Equilibrated, robust at material interfaces, not a bound.
//
// # Which estimator
//
// Effectivity η/error in the effectivity study (adapt/study, command
// examples/compare with its defaults: six model problems, P1 and P2,
// Dörfler θ = 0.5 to 2e4 DOFs, nested-iteration solves; 60 runs): the range
// at the last step, and in brackets over every step after the first three.
//
//	estimator     P1 last          P2 last          every step
//	Equilibrated  1.04–1.41        1.02–1.35        ≥ 1.016 on all 624 steps (a theorem: ≥ 1)
//	FluxRecovery  0.56–1.21        0.41–0.86        (0.22–1.22)
//	Residual      1.38–5.83        2.91–9.36        (1.38–20.4)
//	Averaging     0.38–1.00        0.29–0.85        (0.22–1.18)
//	SPR           0.43–1.02        0.40–1.09        (0.26–1.88)
//
// The lowest values of the recovery estimators are on the Kellogg
// checkerboard (Averaging 0.38, SPR 0.43, FluxRecovery 0.56 for P1) and in
// the first steps of the peak and layer problems; Equilibrated's highest
// (1.35–1.41) is on Kellogg, 1.02–1.08 on the other five.
//
// Use Equilibrated when the number itself matters: a certified error, a
// stopping test, a report. It costs the most: per triangle of a P1
// solution 553–569 ns, 5.0 to 5.5 times the residual estimator (three
// runs of BenchmarkEstimate and BenchmarkEquilibrated side by side, 1e5
// triangles), and of a P2 solution 3.20–3.23 µs, 6.4 to 6.8 times the
// residual estimator's (1e4 triangles, three runs); FluxRecovery P1
// 279–313 ns at 1e5 triangles. Use Residual to steer refinement
// cheaply: it is reliable (an upper bound up to an unknown constant) and
// its rates follow the error's, but its total is off by the factor in the
// table. Use FluxRecovery or the gradient recoveries for a cheap total
// near the error on smooth problems, knowing that they can under-estimate
// by a factor of two or more (P2, interfaces, singular points).
//
// # Conventions
//
// h_T is the diameter (longest edge) of T; h_E the length of E. Indicators
// are stored squared (Eta2, Osc2); files and pictures carry η_T. The
// effectivity index is η / ‖a^½ ∇(u − u_h)‖ (the energy norm; with c > 0 the
// energy norm adds c‖u − u_h‖²). The true error is integrated as by
// fem.Function.Error.
//
// An estimate measures the discretization error of the finite element
// solution of the stated problem (and, for Equilibrated, the algebraic
// error of the given u_h), not modelling error: even the guaranteed bound
// says nothing about whether the equation, its coefficients and its data
// describe the physical system; engineering use
// follows local codes and licensed practice. The stated problem is posed
// on the mesh: its polygon and the coefficients of its regions. Where the
// mesh follows curves (mesh.Mesh.EdgeCurve: curved boundaries and
// interfaces), refinement brings the polygon to the curve, but no
// estimator here, the goal estimate included, sees the difference between
// the polygon's problem and the curved one.
//
// Every estimator is a fixed number of passes over the triangles, edges and
// vertices, split over GOMAXPROCS goroutines; results do not depend on
// GOMAXPROCS or on the numbering of the mesh.
//
// References:
//   - R. Verfürth, A Posteriori Error Estimation Techniques for Finite
//     Element Methods, Oxford University Press, 2013.
//   - C. Bernardi and R. Verfürth, Adaptive finite element methods for
//     elliptic equations with non-smooth coefficients, Numer. Math. 85
//     (2000) 579–608.
//   - O. C. Zienkiewicz and J. Z. Zhu, Int. J. Numer. Methods Eng. 24 (1987)
//     337–357 and 33 (1992) 1331–1382.
package estimate
