package adapt_test

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/adapt"
)

// Dörfler marking with θ = ½ of η² = (4, 1, 3, 2), total 10: the two
// largest, 4 + 3 = 7, reach 5, and the largest alone does not.
func ExampleDorfler() {
	eta2 := []float64{4, 1, 3, 2}
	marked, err := adapt.Dorfler{Theta: 0.5}.Mark(nil, eta2)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(marked)
	// Output: [true false true false]
}
