package fem

import (
	"math"
	"testing"
)

func TestRegionTable(t *testing.T) {
	t.Parallel()
	a := map[int32]Tensor{3: {XX: 2, XY: 1, YY: 2}, 7: Scalar(0.5)}
	cases := []struct {
		name  string
		p     *Problem
		probe []int32
	}{
		{"uniform", &Problem{}, []int32{0, 5, -1}},
		{"table", &Problem{A: a}, []int32{3, 7, 5, 2, 8}},
		{"wide span, map", &Problem{A: map[int32]Tensor{0: Scalar(3), 1 << 20: {XX: 1, XY: -2, YY: 5}}}, []int32{0, 1 << 20, 9}},
		{"empty A", &Problem{A: map[int32]Tensor{}}, []int32{0, 1}},
	}
	for _, c := range cases {
		rt := NewRegionTable(c.p)
		if got, want := rt.Uniform(), c.p.A == nil; got != want {
			t.Errorf("%s: Uniform() = %v, want %v", c.name, got, want)
		}
		for _, r := range c.probe {
			want := c.p.Diffusion(0, 0, r) // the map itself, or a = 1
			tt, w := rt.AtMin(r)
			if got := rt.At(r); got != want || tt != want {
				t.Errorf("%s: region %d: At = %+v, AtMin = %+v, want %+v", c.name, r, got, tt, want)
			}
			if w != want.MinEig() {
				t.Errorf("%s: region %d: smallest eigenvalue %g, want %g", c.name, r, w, want.MinEig())
			}
		}
	}
}

func TestTensorMinEig(t *testing.T) {
	t.Parallel()
	const tol = 1e-14
	for _, c := range []struct {
		name string
		t    Tensor
		want float64
	}{
		// [[a, b], [b, a]] has eigenvalues a ± b: classical closed form.
		{"[[2,1],[1,2]]", Tensor{XX: 2, XY: 1, YY: 2}, 1},
		// A diagonal matrix has its diagonal as eigenvalues.
		{"diag(5,0.25)", Tensor{XX: 5, YY: 0.25}, 0.25},
		// [[1,-2],[-2,5]]: λ = 3 ± √8 (characteristic polynomial λ² − 6λ + 1).
		{"[[1,-2],[-2,5]]", Tensor{XX: 1, XY: -2, YY: 5}, 3 - math.Sqrt(8)},
	} {
		if got := c.t.MinEig(); math.Abs(got-c.want) > tol*max(1, math.Abs(c.want)) {
			t.Errorf("%s: MinEig = %.17g, want %.17g", c.name, got, c.want)
		}
	}
}
