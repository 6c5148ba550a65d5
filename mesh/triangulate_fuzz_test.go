package mesh

import (
	"errors"
	"math"
	"testing"
)

// domainFrom decodes fuzz bytes into a Domain: points on a grid of small
// integers (so that collinear, cocircular and duplicate points are
// common), a closed loop through the first points, further segments,
// holes and seeds, and a size bound.
func domainFrom(data []byte) (*Domain, Options) {
	next := (*fuzzBytes)(&data).next
	d := &Domain{}
	np := int(next()%10) + 3
	loop := int(next()%byte(np-2)) + 3
	for range np {
		d.Points = append(d.Points, float64(int8(next())%16)/4, float64(int8(next())%16)/4)
	}
	for i := range loop {
		d.Segments = append(d.Segments, int32(i), int32((i+1)%loop))
	}
	for range int(next() % 4) {
		d.Segments = append(d.Segments, int32(next()%byte(np)), int32(next()%byte(np)))
	}
	for range int(next() % 3) {
		d.Holes = append(d.Holes, float64(int8(next()))/32, float64(int8(next()))/32)
	}
	for k := range int(next() % 3) {
		d.Seeds = append(d.Seeds, float64(int8(next()))/32, float64(int8(next()))/32)
		d.SeedRegion = append(d.SeedRegion, int32(k))
	}
	for s := range len(d.Segments) / 2 {
		d.Tags = append(d.Tags, int32(s%3))
	}
	return d, fuzzOptions(next(), 32)
}

// fuzzBytes hands out fuzz bytes one at a time, and 0 once they run out.
type fuzzBytes []byte

func (b *fuzzBytes) next() byte {
	if len(*b) == 0 {
		return 0
	}
	v := (*b)[0]
	*b = (*b)[1:]
	return v
}

// fuzzOptions decodes the Options of a fuzzed Triangulate from one byte:
// the defaults, a size bound H of 4 to 35 units of 1/scale, no
// refinement, or a smallest angle of 25°; at most 20000 vertices.
func fuzzOptions(b byte, scale float64) Options {
	o := Options{MaxVertices: 20000}
	switch b % 4 {
	case 1:
		o.H = float64(b%32+4) / scale
	case 2:
		o.NoRefinement = true
	case 3:
		o.MinAngle = 25
	}
	return o
}

// triangulateFailed checks the result of a fuzzed Triangulate that
// failed: the error is a *DomainError or wraps ErrArgument, ErrVertexLimit
// or ErrZeroArea, and comes without a mesh or report. It reports whether
// Triangulate failed.
func triangulateFailed(t *testing.T, m *Mesh, rep *Report, err error) bool {
	t.Helper()
	if err == nil {
		return false
	}
	var de *DomainError
	if !errors.As(err, &de) && !errors.Is(err, ErrArgument) && !errors.Is(err, ErrVertexLimit) && !errors.Is(err, ErrZeroArea) {
		t.Fatalf("unexpected error %v", err)
	}
	if m != nil || rep != nil {
		t.Fatal("a mesh with an error")
	}
	return true
}

// FuzzTriangulate meshes arbitrary small domains: Triangulate must never
// panic; an error is a *DomainError, or wraps ErrArgument or
// ErrVertexLimit; a mesh is valid (New built it), lies inside the points'
// bounding box, and every triangle below the angle bound is sheltered by
// a small input angle, as checked by coordinates alone.
func FuzzTriangulate(f *testing.F) {
	f.Add([]byte{4, 1, 0, 0, 8, 0, 8, 8, 0, 8, 0, 0, 0, 0})
	f.Add([]byte{8, 5, 0, 0, 12, 0, 12, 12, 0, 12, 1, 12, 6, 3, 6, 6, 3, 6, 2, 1, 2, 1, 16, 16, 1, 20, 20, 1})
	f.Add([]byte{5, 2, 0, 0, 15, 0, 1, 1, 0, 15, 4, 4, 1, 3, 4, 0, 0, 0, 3})
	f.Fuzz(func(t *testing.T, data []byte) {
		d, o := domainFrom(data)
		m, rep, err := Triangulate(d, o)
		if triangulateFailed(t, m, rep, err) {
			return
		}
		x0, y0, x1, y1 := math.Inf(1), math.Inf(1), math.Inf(-1), math.Inf(-1)
		for p := range len(d.Points) / 2 {
			x0, x1 = min(x0, d.Points[2*p]), max(x1, d.Points[2*p])
			y0, y1 = min(y0, d.Points[2*p+1]), max(y1, d.Points[2*p+1])
		}
		area := 0.0
		for k := range m.NumTriangles() {
			if m.Area(k) <= 0 {
				t.Fatalf("triangle %d has area %g", k, m.Area(k))
			}
			area += m.Area(k)
		}
		if area > (x1-x0)*(y1-y0)*(1+1e-12) {
			t.Fatalf("area %g beyond the bounding box", area)
		}
		for v := range m.NumVertices() {
			x, y := m.Vertex(v)
			if x < x0 || x > x1 || y < y0 || y > y1 {
				t.Fatalf("vertex %d at (%g, %g) outside the bounding box", v, x, y)
			}
		}
		if o.NoRefinement {
			return
		}
		theta := 20.0
		if o.MinAngle != 0 {
			theta = o.MinAngle
		}
		for k := range m.NumTriangles() {
			tri := m.Tri[3*k : 3*k+3]
			amin, at := math.Inf(1), 0
			for i := range 3 {
				if g := angle(m.X, tri[i], tri[(i+1)%3], tri[(i+2)%3]); g < amin {
					amin, at = g, i
				}
			}
			if amin >= theta*math.Pi/180*(1-1e-12) {
				continue
			}
			px, py := m.Vertex(int(tri[(at+1)%3]))
			qx, qy := m.Vertex(int(tri[(at+2)%3]))
			if !shelteredByGeometry(d, px, py, qx, qy) {
				t.Fatalf("triangle %d: smallest angle %.4g° below %g° and not sheltered", k, amin*180/math.Pi, theta)
			}
		}
	})
}
