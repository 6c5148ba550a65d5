package mesh

import (
	"math"
	"math/big"
)

// The two geometric predicates of the mesher, evaluated with a
// floating-point filter and an exact fallback.
//
// Each predicate first evaluates its determinant in float64 together with
// a bound on the rounding error of that evaluation. When the magnitude of
// the result exceeds the bound, its sign is the sign of the exact
// determinant; otherwise the determinant is evaluated again exactly in
// rational arithmetic (math/big), which every float64 input allows because
// a float64 is a rational number. So the sign returned is always the sign
// of the exact determinant of the given float64 coordinates, however close
// to degenerate they are.
//
//	orient(a, b, c)    = det [[ax−cx, ay−cy], [bx−cx, by−cy]]
//	incircle(a, b, c, d) = det [[adx, ady, adx²+ady²], [bdx, bdy, …], [cdx, cdy, …]]
//	                       with adx = ax − dx etc.
//
// orient is positive when a, b, c turn counter-clockwise; incircle is
// positive when d lies inside the circle through the counter-clockwise
// triangle a, b, c.
//
// The error bounds are the first-stage bounds of Shewchuk's adaptive
// predicates, (3 + 16ε)ε·(|detleft| + |detright|) for orient and
// (10 + 96ε)ε·permanent for incircle, with ε = 2⁻⁵³.
//
// References:
//   - J. R. Shewchuk, Adaptive precision floating-point arithmetic and fast
//     robust geometric predicates, Discrete Comput. Geom. 18 (1997)
//     305–363.

const (
	epsilon        = 1.0 / (1 << 53)
	orientErrBound = (3 + 16*epsilon) * epsilon
	iccErrBound    = (10 + 96*epsilon) * epsilon
)

// orient returns the sign (-1, 0, 1) of orient(a, b, c) for the vertices
// a, b, c of x.
func orient(x []float64, a, b, c int32) int {
	return orientXY(x[2*a], x[2*a+1], x[2*b], x[2*b+1], x[2*c], x[2*c+1])
}

// orientXY is orient on explicit coordinates.
func orientXY(ax, ay, bx, by, cx, cy float64) int {
	detleft := (ax - cx) * (by - cy)
	detright := (ay - cy) * (bx - cx)
	det := detleft - detright
	bound := orientErrBound * (math.Abs(detleft) + math.Abs(detright))
	// A NaN from overflow fails both tests and goes to the exact path.
	switch {
	case det > bound:
		return 1
	case -det > bound:
		return -1
	}
	return orientExact(ax, ay, bx, by, cx, cy)
}

func rat(v float64) *big.Rat { return new(big.Rat).SetFloat64(v) }

func orientExact(ax, ay, bx, by, cx, cy float64) int {
	acx := new(big.Rat).Sub(rat(ax), rat(cx))
	acy := new(big.Rat).Sub(rat(ay), rat(cy))
	bcx := new(big.Rat).Sub(rat(bx), rat(cx))
	bcy := new(big.Rat).Sub(rat(by), rat(cy))
	l := new(big.Rat).Mul(acx, bcy)
	r := new(big.Rat).Mul(acy, bcx)
	return l.Cmp(r)
}

// incircle returns the sign (-1, 0, 1) of incircle(a, b, c, d) for the
// vertices of x.
func incircle(x []float64, a, b, c, d int32) int {
	return incircleXY(x[2*a], x[2*a+1], x[2*b], x[2*b+1], x[2*c], x[2*c+1], x[2*d], x[2*d+1])
}

// incircleXY is incircle on explicit coordinates.
func incircleXY(ax, ay, bx, by, cx, cy, dx, dy float64) int {
	adx, ady := ax-dx, ay-dy
	bdx, bdy := bx-dx, by-dy
	cdx, cdy := cx-dx, cy-dy
	bdxcdy, cdxbdy := bdx*cdy, cdx*bdy
	alift := adx*adx + ady*ady
	cdxady, adxcdy := cdx*ady, adx*cdy
	blift := bdx*bdx + bdy*bdy
	adxbdy, bdxady := adx*bdy, bdx*ady
	clift := cdx*cdx + cdy*cdy
	det := alift*(bdxcdy-cdxbdy) + blift*(cdxady-adxcdy) + clift*(adxbdy-bdxady)
	perm := (math.Abs(bdxcdy)+math.Abs(cdxbdy))*alift +
		(math.Abs(cdxady)+math.Abs(adxcdy))*blift +
		(math.Abs(adxbdy)+math.Abs(bdxady))*clift
	bound := iccErrBound * perm
	switch {
	case det > bound:
		return 1
	case -det > bound:
		return -1
	}
	return incircleExact(ax, ay, bx, by, cx, cy, dx, dy)
}

func incircleExact(ax, ay, bx, by, cx, cy, dx, dy float64) int {
	sub := func(p, q float64) *big.Rat { return new(big.Rat).Sub(rat(p), rat(q)) }
	adx, ady := sub(ax, dx), sub(ay, dy)
	bdx, bdy := sub(bx, dx), sub(by, dy)
	cdx, cdy := sub(cx, dx), sub(cy, dy)
	mul := func(p, q *big.Rat) *big.Rat { return new(big.Rat).Mul(p, q) }
	lift := func(p, q *big.Rat) *big.Rat { return new(big.Rat).Add(mul(p, p), mul(q, q)) }
	minor := func(px, py, qx, qy *big.Rat) *big.Rat { return new(big.Rat).Sub(mul(px, qy), mul(qx, py)) }
	det := mul(lift(adx, ady), minor(bdx, bdy, cdx, cdy))
	det.Add(det, mul(lift(bdx, bdy), minor(cdx, cdy, adx, ady)))
	det.Add(det, mul(lift(cdx, cdy), minor(adx, ady, bdx, bdy)))
	return det.Sign()
}
