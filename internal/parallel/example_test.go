package parallel_test

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/internal/parallel"
)

// Square 10,000 numbers on all cores, then sum them in index order, so the
// sum is the same whatever GOMAXPROCS is.
func ExampleFor() {
	v := make([]float64, 10000)
	_ = parallel.For(len(v), 1000, func(lo, hi int) error {
		for i := lo; i < hi; i++ {
			v[i] = float64(i) * float64(i)
		}
		return nil
	})
	sum := 0.0
	for _, x := range v {
		sum += x
	}
	fmt.Printf("%.6g\n", sum)
	// Output: 3.33283e+11
}
