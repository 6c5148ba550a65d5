package mesh

import (
	"math"
	"math/big"
	"math/rand/v2"
	"testing"
)

// The orientation of p = (0.5 + i·u, 0.5 + j·u), u = 2⁻⁵³, with q = (12, 12)
// and r = (24, 24) is 12u(j − i) exactly (expand the determinant), so its
// sign is the sign of j − i; naive float64 evaluation gets many of these
// signs wrong (Kettner, Mehlhorn, Pion, Schirra and Yap, Classroom examples
// of robustness problems in geometric computations, Comput. Geom. 40 (2008)
// 61–78: from memory).
func TestOrientNearDegenerate(t *testing.T) {
	t.Parallel()
	u := math.Ldexp(1, -53)
	naiveWrong := 0
	for i := range 64 {
		for j := range 64 {
			px, py := 0.5+float64(i)*u, 0.5+float64(j)*u
			want := 0
			switch {
			case j > i:
				want = 1
			case j < i:
				want = -1
			}
			if got := orientXY(px, py, 12, 12, 24, 24); got != want {
				t.Fatalf("orient(p(%d, %d), q, r) = %d, want %d", i, j, got, want)
			}
			naive := (12-px)*(24-py) - (12-py)*(24-px)
			if (naive > 0) != (want > 0) || (naive < 0) != (want < 0) {
				naiveWrong++
			}
		}
	}
	if naiveWrong == 0 {
		t.Error("the naive evaluation got every sign right: the test does not reach the exact path")
	}
	t.Logf("naive float64 evaluation: %d of 1024 signs wrong", naiveWrong)
}

// In-circle signs against an independent exact evaluation (big.Float at
// 1024 bits, enough for products of four differences of these inputs), on
// points of a circle some of whose coordinates are moved by a few units in
// the last place, with exactly cocircular cases (0) among them.
func TestIncircleNearDegenerate(t *testing.T) {
	t.Parallel()
	rng := rand.New(rand.NewPCG(1, 1))
	exact := func(ax, ay, bx, by, cx, cy, dx, dy float64) int {
		f := func(v float64) *big.Float { return new(big.Float).SetPrec(1024).SetFloat64(v) }
		sub := func(p, q float64) *big.Float { return new(big.Float).SetPrec(1024).Sub(f(p), f(q)) }
		mul := func(p, q *big.Float) *big.Float { return new(big.Float).SetPrec(1024).Mul(p, q) }
		add := func(p, q *big.Float) *big.Float { return new(big.Float).SetPrec(1024).Add(p, q) }
		adx, ady, bdx, bdy, cdx, cdy := sub(ax, dx), sub(ay, dy), sub(bx, dx), sub(by, dy), sub(cx, dx), sub(cy, dy)
		la, lb, lc := add(mul(adx, adx), mul(ady, ady)), add(mul(bdx, bdx), mul(bdy, bdy)), add(mul(cdx, cdx), mul(cdy, cdy))
		m := func(px, py, qx, qy *big.Float) *big.Float {
			return new(big.Float).SetPrec(1024).Sub(mul(px, qy), mul(qx, py))
		}
		det := add(add(mul(la, m(bdx, bdy, cdx, cdy)), mul(lb, m(cdx, cdy, adx, ady))), mul(lc, m(adx, ady, bdx, bdy)))
		return det.Sign()
	}
	zeros := 0
	for range 3000 {
		pert := func(v float64) float64 {
			k := 0
			if rng.IntN(4) == 0 && v != 0 { // (a zero would move to a subnormal, beyond 1024 bits)
				k = rng.IntN(5) - 2
			}
			for range max(k, -k) {
				if k > 0 {
					v = math.Nextafter(v, math.Inf(1))
				} else {
					v = math.Nextafter(v, math.Inf(-1))
				}
			}
			return v
		}
		// Points of the circle of radius 5 with integer coordinates
		// (Pythagorean triple 3, 4, 5).
		pts := [][2]float64{{5, 0}, {0, 5}, {-5, 0}, {0, -5}, {3, 4}, {-4, 3}, {-3, -4}, {4, -3}}
		rng.Shuffle(len(pts), func(i, j int) { pts[i], pts[j] = pts[j], pts[i] })
		a, b, c, d := pts[0], pts[1], pts[2], pts[3]
		ax, ay, bx, by, cx, cy, dx, dy := pert(a[0]), pert(a[1]), pert(b[0]), pert(b[1]), pert(c[0]), pert(c[1]), pert(d[0]), pert(d[1])
		want := exact(ax, ay, bx, by, cx, cy, dx, dy)
		if want == 0 {
			zeros++
		}
		if got := incircleXY(ax, ay, bx, by, cx, cy, dx, dy); got != want {
			t.Fatalf("incircle = %d, exact %d, rat %d: %v", got, want, incircleExact(ax, ay, bx, by, cx, cy, dx, dy), []float64{ax, ay, bx, by, cx, cy, dx, dy})
		}
		if o := orientXY(ax, ay, bx, by, cx, cy); o != orientExact(ax, ay, bx, by, cx, cy) {
			t.Fatalf("orient = %d, exact %d", o, orientExact(ax, ay, bx, by, cx, cy))
		}
	}
	if zeros == 0 {
		t.Error("no exactly cocircular case was drawn")
	}
}
