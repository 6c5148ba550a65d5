package amg

import (
	"math"
	"testing"

	"github.com/posteriori-fem/posteriori/internal/sparse"
)

// TestStrengthFiltered checks the filtered matrix A_F of strength against
// its definition (Vaněk, Mandel and Brezina 1996, as in the package
// documentation): a_ij on the strong entries, zero on the weak ones, and
// a_ii plus the weak entries of row i on the diagonal. With explicit zeros
// as the only weak entries valF must be the matrix's own values; with a
// nonzero weak entry it must be a copy.
func TestStrengthFiltered(t *testing.T) {
	// A path of 5 nodes, a_ii = 2, a_i,i±1 = −1, plus the entries (0, 4)
	// and (4, 0), weak at θ = 0.08 when |w| < 0.16.
	build := func(w float64) *sparse.CSR {
		var rowPtr []int32
		var col []int32
		var val []float64
		rowPtr = append(rowPtr, 0)
		for i := range 5 {
			for j := range 5 {
				var v float64
				switch {
				case i == j:
					v = 2
				case j == i-1 || j == i+1:
					v = -1
				case i+j == 4 && (i == 0 || j == 0):
					v = w
				default:
					continue
				}
				col, val = append(col, int32(j)), append(val, v)
			}
			rowPtr = append(rowPtr, int32(len(col)))
		}
		return &sparse.CSR{Rows: 5, Cols: 5, RowPtr: rowPtr, Col: col, Val: val}
	}
	for _, w := range []float64{0, -0.1, 0.05, -0.5} {
		a := build(w)
		diag := a.Diagonal(nil)
		var c connections
		strength(&c, a, diag, DefaultTheta)
		weakNonzero := false
		for i := range a.Rows {
			lump := 0.0
			for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
				j := int(a.Col[k])
				strong := j != i && math.Abs(a.Val[k]) >= DefaultTheta*math.Sqrt(diag[i]*diag[j])
				if strong != c.strong[k] {
					t.Fatalf("w = %g: strong[(%d,%d)] = %v, want %v", w, i, j, c.strong[k], strong)
				}
				if j != i && !strong {
					lump += a.Val[k]
					weakNonzero = weakNonzero || a.Val[k] != 0
				}
			}
			for k := a.RowPtr[i]; k < a.RowPtr[i+1]; k++ {
				j := int(a.Col[k])
				want := 0.0
				switch {
				case j == i:
					want = diag[i] + lump
				case c.strong[k]:
					want = a.Val[k]
				}
				if c.valF[k] != want {
					t.Fatalf("w = %g: A_F(%d,%d) = %g, want %g", w, i, j, c.valF[k], want)
				}
			}
			if c.diagF[i] != diag[i]+lump {
				t.Fatalf("w = %g: diagF[%d] = %g, want %g", w, i, c.diagF[i], diag[i]+lump)
			}
		}
		if alias := &c.valF[0] == &a.Val[0]; alias == weakNonzero {
			t.Errorf("w = %g: valF is the matrix's values: %v, with a nonzero weak entry: %v", w, alias, weakNonzero)
		}
	}
}
