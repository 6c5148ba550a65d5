// Package adapt holds marking strategies and the solve–estimate–mark–refine
// loop that a caller drives from a Go program, with this library's solver
// or their own.
//
// Run takes a Problem (initial mesh, degree, data, optional exact
// solution), Settings (stop rules: a tolerance on the estimate, absolute or
// relative to the energy norm of u_h, a DOF budget, a step limit, and
// cancellation by context; observers OnStep, of the step's record, and
// OnStepData, of the record with the step's mesh, solution and indicators)
// and a Method (a Solver, an estimate.Estimator and a Marker, each
// replaceable). Each step
//
//	solve on the current mesh, starting from the previous solution carried to it
//	  (by default until the algebraic error is a tenth of the previous estimate),
//	estimate η_T² per triangle, and the energy norm |||u_h|||,
//	measure the true error (when an exact solution is given),
//	record the step,
//	mark with the Marker and refine by newest-vertex bisection (mesh.Refine).
//
// The result holds the last completed step's mesh, solution and indicators,
// and the records of every step, which WriteCSV writes with the documented
// CSVHeader.
//
// # Conventions
//
// "DOFs" is the dimension of the whole space, Dirichlet nodes included;
// FreeDOFs leaves them out. Markers take squared indicators η_T² and order
// triangles by (η_T² descending, index ascending), so marks are unique and
// deterministic. The loop never solves on more than Settings.MaxDOFs DOFs.
//
// The estimates measure discretization error only, not modelling error;
// engineering use of the results follows local codes and licensed
// practice.
package adapt
