package fem

import (
	"fmt"
	"math"
)

// BoxMean is the mean of u over the part of the domain inside the
// axis-aligned box [X0, X1] × [Y0, Y1], J(u) = ∫_{Ω∩B} u / |Ω ∩ B|.
//
// Its load is exact for P1 and P2: each triangle is clipped against the
// box (Sutherland–Hodgman: the polygon is cut by the four half-planes
// x ≥ X0, x ≤ X1, y ≥ Y0, y ≤ Y1 in turn), the convex polygon that
// remains is cut into a fan of triangles from its first corner, and the
// basis functions, polynomials of degree ≤ 2, are integrated on each by
// the degree-2 Dunavant rule, exact for them. Triangles inside the box
// take the closed form of RegionMean. The cost is linear in the number of
// triangles.
//
// A box with a NaN or infinite coordinate gives ErrNotFinite; one with
// X1 ≤ X0 or Y1 ≤ Y0 gives ErrArgument; a box that does not overlap the
// domain (|Ω ∩ B| = 0) gives ErrGoal.
//
// References:
//   - I. E. Sutherland and G. W. Hodgman, Reentrant polygon clipping,
//     Commun. ACM 17 (1974) 32–42.
type BoxMean struct {
	X0, Y0, X1, Y1 float64
}

func (g BoxMean) check() error {
	for _, v := range []float64{g.X0, g.Y0, g.X1, g.Y1} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return fmt.Errorf("fem: BoxMean: box %v: %w", g, ErrNotFinite)
		}
	}
	if !(g.X1 > g.X0 && g.Y1 > g.Y0) {
		return fmt.Errorf("fem: BoxMean: box %v: want X1 > X0 and Y1 > Y0: %w", g, ErrArgument)
	}
	return nil
}

// clip returns the part of triangle geo inside the box as a polygon
// (counter-clockwise, up to 7 corners) in dst, and whether the triangle
// lies wholly inside.
func (g BoxMean) clip(geo *geometry, dst [][2]float64) ([][2]float64, bool) {
	xmin, xmax := min(geo.x[0], geo.x[1], geo.x[2]), max(geo.x[0], geo.x[1], geo.x[2])
	ymin, ymax := min(geo.y[0], geo.y[1], geo.y[2]), max(geo.y[0], geo.y[1], geo.y[2])
	if xmin >= g.X0 && xmax <= g.X1 && ymin >= g.Y0 && ymax <= g.Y1 {
		return dst[:0], true
	}
	if xmax <= g.X0 || xmin >= g.X1 || ymax <= g.Y0 || ymin >= g.Y1 {
		return dst[:0], false
	}
	var a, b [8][2]float64
	in := a[:0]
	for i := range 3 {
		in = append(in, [2]float64{geo.x[i], geo.y[i]})
	}
	// Each plane: keep the points with s·(coordinate c) ≤ s·bound.
	planes := [4]struct {
		c     int
		s, at float64
	}{{0, -1, g.X0}, {0, 1, g.X1}, {1, -1, g.Y0}, {1, 1, g.Y1}}
	for pi, pl := range planes {
		out := b[:0]
		if pi%2 == 1 {
			out = a[:0]
		}
		inside := func(q [2]float64) bool { return pl.s*q[pl.c] <= pl.s*pl.at }
		for i, cur := range in {
			prev := in[(i+len(in)-1)%len(in)]
			ci, pin := inside(cur), inside(prev)
			if ci != pin {
				t := (pl.at - prev[pl.c]) / (cur[pl.c] - prev[pl.c])
				q := [2]float64{prev[0] + t*(cur[0]-prev[0]), prev[1] + t*(cur[1]-prev[1])}
				q[pl.c] = pl.at
				out = append(out, q)
			}
			if ci {
				out = append(out, cur)
			}
		}
		in = out
		if len(in) == 0 {
			break
		}
	}
	return append(dst[:0], in...), false
}

// pieces appends the fan of the clipped polygon of triangle geo to dst,
// with corners in geo's barycentric coordinates; a triangle wholly inside
// is one piece.
func (g BoxMean) pieces(geo *geometry, dst []goalPiece) []goalPiece {
	var buf [8][2]float64
	poly, whole := g.clip(geo, buf[:0])
	if whole {
		return append(dst, goalPiece{c: [3][3]float64{{1, 0, 0}, {0, 1, 0}, {0, 0, 1}}, area: geo.area})
	}
	for i := 1; i+1 < len(poly); i++ {
		a, b, c := poly[0], poly[i], poly[i+1]
		area := 0.5 * ((b[0]-a[0])*(c[1]-a[1]) - (b[1]-a[1])*(c[0]-a[0]))
		if area <= 0 {
			continue
		}
		dst = append(dst, goalPiece{c: [3][3]float64{geo.bary(a[0], a[1]), geo.bary(b[0], b[1]), geo.bary(c[0], c[1])}, area: area})
	}
	return dst
}

// area returns |Ω ∩ B|, or an error wrapping ErrGoal when it is zero.
func (g BoxMean) area(s *Space) (float64, error) {
	if err := g.check(); err != nil {
		return 0, err
	}
	var geo geometry
	var buf []goalPiece
	a := 0.0
	for k := range s.Mesh.NumTriangles() {
		s.geom(&geo, k)
		buf = g.pieces(&geo, buf[:0])
		for _, pc := range buf {
			a += pc.area
		}
	}
	if a == 0 {
		return 0, fmt.Errorf("fem: BoxMean: box [%g, %g] × [%g, %g] does not overlap the domain: %w", g.X0, g.X1, g.Y0, g.Y1, ErrGoal)
	}
	return a, nil
}

// Load writes ∫_{Ω∩B} φ_i / |Ω ∩ B|, exactly.
func (g BoxMean) Load(dst []float64, s *Space, p *Problem) ([]float64, error) {
	if s == nil {
		return nil, fmt.Errorf("fem: BoxMean: nil space: %w", ErrArgument)
	}
	a, err := g.area(s)
	if err != nil {
		return nil, err
	}
	// The degree-2 rule with points at the edge midpoints: weights 1/3.
	mid := [3][3]float64{{0, 0.5, 0.5}, {0.5, 0, 0.5}, {0.5, 0.5, 0}}
	return elementLoads(dst, s, func(geo *geometry, k int, fe []float64) error {
		var buf [8]goalPiece
		var phi [6]float64
		for _, pc := range g.pieces(geo, buf[:0]) {
			for _, m := range mid {
				var l [3]float64
				for i := range 3 {
					l[i] = m[0]*pc.c[0][i] + m[1]*pc.c[1][i] + m[2]*pc.c[2][i]
				}
				shape(s.Degree, l, phi[:])
				c := pc.area / (3 * a)
				for i := range fe {
					fe[i] += c * phi[i]
				}
			}
		}
		return nil
	})
}

// Value returns ∫_{Ω∩B} u_h / |Ω ∩ B|, exactly.
func (g BoxMean) Value(u *Function, p *Problem) (float64, error) { return linearValue(g, u, p) }

// ExactValue returns ∫_{Ω∩B} u / |Ω ∩ B| for the exact solution: each
// clipped piece integrated by the scheme of Function.Error (see
// goalIntegral).
func (g BoxMean) ExactValue(s *Space, ex Exact, p *Problem) (float64, error) {
	a, err := g.area(s)
	if err != nil {
		return 0, err
	}
	v, err := goalIntegral(s, ex, p, nil, g.pieces, nil, func(_ *errorIntegrator, x, y float64, _ [3]float64) float64 { return ex.U(x, y) })
	return v / a, err
}
