// Package estimate computes per-element a posteriori error indicators from
// a discrete solution of package fem, and the measurements (true errors,
// effectivity indices, convergence rates) that tell whether to trust them.
//
// The estimators are not written yet; this file holds the package's place
// in the module. The conventions they will follow:
//
//	η_T² = h_T² ‖f + ∇·(a∇u_h) − c u_h‖²_T + ½ Σ_{interior E ⊂ ∂T} h_E ‖[[a∇u_h·n]]‖²_E
//	       + Σ_{Neumann E ⊂ ∂T} h_E ‖g_N − a∇u_h·n‖²_E
//
// for the residual estimator, and η_T = ‖G(u_h) − ∇u_h‖_T for the recovery
// estimators, with the total estimate η = (Σ η_T²)^½.
package estimate
