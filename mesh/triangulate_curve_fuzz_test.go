package mesh

import (
	"math"
	"testing"
)

// curvedDomainFrom decodes fuzz bytes into a rectangle with circles: each
// circle is a loop of 3 to 10 points on it, following the circle, and is a
// hole, a seeded material or an unseeded piece; circles may cross the
// rectangle, each other, touch them or lie outside, and their points may
// fall on other points. Also a size bound.
func curvedDomainFrom(data []byte) (*Domain, Options) {
	next := (*fuzzBytes)(&data).next
	w, h := float64(next()%8+1), float64(next()%8+1)
	d := &Domain{Points: []float64{0, 0, w, 0, w, h, 0, h}, Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0}, Tags: []int32{0, 1, 2, 3}, SegCurve: []int32{-1, -1, -1, -1}}
	for c := range int(next() % 4) {
		cx, cy := float64(int8(next()))/16, float64(int8(next()))/16
		r := float64(next()%64+1) / 32
		n := int(next()%8) + 3
		phase := float64(next()) / 256 * 2 * math.Pi
		d.Curves = append(d.Curves, Circle{X: cx, Y: cy, R: r})
		first := int32(len(d.Points) / 2)
		for i := range n {
			a := phase + 2*math.Pi*float64(i)/float64(n)
			d.Points = append(d.Points, cx+r*math.Cos(a), cy+r*math.Sin(a))
		}
		for i := range n {
			d.Segments = append(d.Segments, first+int32(i), first+int32((i+1)%n))
			d.Tags = append(d.Tags, int32(4+c))
			d.SegCurve = append(d.SegCurve, int32(c))
		}
		switch next() % 3 {
		case 0:
			d.Holes = append(d.Holes, cx, cy)
		case 1:
			d.Seeds = append(d.Seeds, cx, cy)
			d.SeedRegion = append(d.SeedRegion, int32(c+1))
		}
	}
	return d, fuzzOptions(next(), 16)
}

// FuzzTriangulateCurved meshes rectangles with circular holes and
// inclusions: Triangulate must never panic; an error is a *DomainError, or
// wraps ErrArgument, ErrVertexLimit or ErrZeroArea, and comes without a
// mesh; a mesh is valid (New built it), has positive areas, and its
// vertices on a curved edge lie on that edge's circle (to 1e-9 of its
// radius) unless the report counts vertices left on a chord.
func FuzzTriangulateCurved(f *testing.F) {
	f.Add([]byte{4, 4, 1, 32, 32, 16, 5, 0, 0, 0})                     // a hole inside
	f.Add([]byte{4, 4, 1, 32, 32, 16, 5, 0, 1, 1})                     // a seeded inclusion, size bound
	f.Add([]byte{4, 4, 1, 100, 100, 16, 5, 0, 0, 0})                   // a hole outside the rectangle
	f.Add([]byte{4, 4, 1, 0, 32, 16, 5, 0, 0, 0})                      // a circle across the side
	f.Add([]byte{4, 4, 2, 32, 32, 16, 4, 0, 0, 32, 32, 8, 6, 0, 1, 3}) // nested circles
	f.Fuzz(func(t *testing.T, data []byte) {
		d, o := curvedDomainFrom(data)
		m, rep, err := Triangulate(d, o)
		if triangulateFailed(t, m, rep, err) {
			return
		}
		for k := range m.NumTriangles() {
			if !(m.Area(k) > 0) {
				t.Fatalf("triangle %d has area %g", k, m.Area(k))
			}
		}
		if rep.OffCurve > 0 {
			return
		}
		for e := range m.NumEdges() {
			if m.EdgeCurve == nil || m.EdgeCurve[e] < 0 {
				continue
			}
			c := m.Curves[m.EdgeCurve[e]]
			ci, isCircle := c.(Circle)
			if !isCircle {
				t.Fatalf("edge %d follows %T", e, c)
			}
			for _, v := range m.Edge[2*e : 2*e+2] {
				x, y := m.Vertex(int(v))
				if r := math.Hypot(x-ci.X, y-ci.Y); math.Abs(r-ci.R) > 1e-9*ci.R {
					t.Fatalf("vertex %d of curved edge %d at distance %.17g from the centre, radius %g", v, e, r, ci.R)
				}
			}
		}
	})
}
