package fem

import (
	"math"
	"testing"

	"gonum.org/v1/gonum/mat"

	"github.com/posteriori-fem/posteriori/mesh"
)

// The assembled Matrix agrees with its gonum views (reference library):
// MulVec with mat.Dense's product, At and the transpose view with the
// dense entries (the matrix is symmetric), Diagonal with the dense
// diagonal, and Validate accepts it.
func TestMatrixViews(t *testing.T) {
	t.Parallel()
	m, err := mesh.LShape(3)
	if err != nil {
		t.Fatal(err)
	}
	for _, deg := range []int{1, 2} {
		s, _ := NewSpace(m, deg)
		sys, err := Assemble(s, &Problem{C: 0.5})
		if err != nil {
			t.Fatal(err)
		}
		a := sys.A
		if err := a.Validate(); err != nil {
			t.Fatal(err)
		}
		d := a.Dense()
		n := a.Rows
		x := make([]float64, n)
		for i := range x {
			x[i] = math.Sin(float64(i))
		}
		y := make([]float64, n)
		a.MulVec(y, x)
		var want mat.VecDense
		want.MulVec(d, mat.NewVecDense(n, x))
		diag := a.Diagonal(nil)
		for i := range n {
			if math.Abs(y[i]-want.AtVec(i)) > 1e-12*(1+math.Abs(want.AtVec(i))) {
				t.Fatalf("P%d row %d: MulVec %g, dense %g", deg, i, y[i], want.AtVec(i))
			}
			if diag[i] != d.At(i, i) {
				t.Fatalf("P%d: diagonal %d: %g, dense %g", deg, i, diag[i], d.At(i, i))
			}
			for _, j := range []int{0, i, n - 1} {
				if a.At(i, j) != d.At(i, j) || a.T().At(i, j) != d.At(j, i) {
					t.Fatalf("P%d: entry (%d, %d): %g, transpose %g, dense %g", deg, i, j, a.At(i, j), a.T().At(i, j), d.At(i, j))
				}
			}
		}
		if r, c := a.Dims(); r != n || c != n || a.NNZ() != len(a.Val) {
			t.Errorf("P%d: dims %d×%d, NNZ %d", deg, r, c, a.NNZ())
		}
	}
}
