package known_test

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/fem/known"
)

func ExampleKellogg() {
	ex, p := known.Kellogg()
	u := ex.U(0.5, 0.5)
	fmt.Printf("u(0.5, 0.5) = %.6f, a = %.4f in region 1, %d Dirichlet tags\n", u, p.A[1].XX, len(p.Dirichlet))
	// Output: u(0.5, 0.5) = -0.075786, a = 161.4476 in region 1, 4 Dirichlet tags
}
