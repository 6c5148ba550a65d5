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
// includes the error of an inexactly solved u_h. Use it when the number
// itself matters (a certified error, a stopping test); it costs one small
// linear solve per vertex. Residual and Recovery are cheaper and
// good at locating the error, but their totals are off by an unknown
// factor (see examples/compare).
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
// follows local codes and licensed practice.
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
