package quadrature_test

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/quadrature"
)

// ExampleForTriangle integrates x·y over the reference triangle with
// vertices (0,0), (1,0), (0,1); the exact value is 1/24.
func ExampleForTriangle() {
	r, err := quadrature.ForTriangle(2)
	if err != nil {
		fmt.Println(err)
		return
	}
	const area = 0.5
	sum := 0.0
	for k := range r.Len() {
		// With v0 = (0,0), v1 = (1,0), v2 = (0,1) the Cartesian point is
		// (x, y) = (λ1, λ2).
		x, y := r.Bary[3*k+1], r.Bary[3*k+2]
		sum += r.W[k] * x * y
	}
	fmt.Println("points:", r.Len())
	fmt.Printf("integral of x*y: %.4g\n", area*sum)
	// Output:
	// points: 3
	// integral of x*y: 0.04167
}
