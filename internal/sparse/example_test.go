package sparse_test

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// ExampleCG assembles a small symmetric positive definite matrix from
// triplets and solves a system with Jacobi-preconditioned CG.
func ExampleCG() {
	// A = [ 4 1 0 ]
	//     [ 1 3 1 ]
	//     [ 0 1 2 ]
	ti := []int32{0, 0, 1, 1, 1, 2, 2}
	tj := []int32{0, 1, 0, 1, 2, 1, 2}
	tv := []float64{4, 1, 1, 3, 1, 1, 2}
	a, err := sparse.FromTriplets(3, 3, ti, tj, tv)
	if err != nil {
		panic(err)
	}
	pre, err := sparse.NewJacobi(a)
	if err != nil {
		panic(err)
	}
	b := []float64{1, 2, 3}
	x := make([]float64, 3) // initial guess 0
	res, err := sparse.CG(a, b, x, pre, sparse.CGSettings{Tol: 1e-12})
	if err != nil {
		panic(err)
	}
	fmt.Println("converged:", res.Converged, "iterations:", res.Iterations)
	fmt.Printf("x = [%.4g %.4g %.4g]\n", x[0], x[1], x[2])
	// Output:
	// converged: true iterations: 3
	// x = [0.2222 0.1111 1.444]
}
