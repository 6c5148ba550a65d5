package mesh

import (
	"errors"
	"math"
	"testing"
)

// Domains of the tests, with their areas in closed form.

// finDomain is a T-shaped fin: a stem [1.5, 2.5] × [0, 3] (region 1) under
// a flange [0, 4] × [3, 4] (region 2), with the interface y = 3 between
// them. The base y = 0 has tag 1, the rest of the boundary tag 2.
func finDomain() *Domain {
	return &Domain{
		Points: []float64{1.5, 0, 2.5, 0, 2.5, 3, 4, 3, 4, 4, 0, 4, 0, 3, 1.5, 3},
		Segments: []int32{0, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6, 6, 7, 7, 0,
			7, 2}, // the interface
		Tags:       []int32{1, 2, 2, 2, 2, 2, 2, 2, 0},
		Seeds:      []float64{2, 1, 2, 3.5},
		SeedRegion: []int32{1, 2},
	}
}

// polygon appends a regular n-gon of radius r about (cx, cy), counter-
// clockwise from angle phase, as points and a closed loop of segments
// with tag.
func polygon(d *Domain, n int, cx, cy, r, phase float64, tag int32) {
	first := int32(len(d.Points) / 2)
	for i := range n {
		a := phase + 2*math.Pi*float64(i)/float64(n)
		d.Points = append(d.Points, cx+r*math.Cos(a), cy+r*math.Sin(a))
		d.Segments = append(d.Segments, first+int32(i), first+int32((i+1)%n))
		d.Tags = append(d.Tags, tag)
	}
}

// plateDomain is the square [0, 2]² (tags 1 to 4 from the bottom, counter-
// clockwise) with a hole: a regular 16-gon of radius 0.5 about (1, 1),
// tag 5.
func plateDomain() *Domain {
	d := &Domain{
		Points:   []float64{0, 0, 2, 0, 2, 2, 0, 2},
		Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0},
		Tags:     []int32{1, 2, 3, 4},
		Holes:    []float64{1, 1},
	}
	polygon(d, 16, 1, 1, 0.5, 0, 5)
	return d
}

// plateArea: 4 minus the area of the 16-gon, ½ n r² sin(2π/n) (closed form).
var plateArea = 4 - 0.5*16*0.25*math.Sin(2*math.Pi/16)

// lDomain is the L-shape (-1, 1)² minus [0, 1) × (-1, 0] with one extra
// interior point; area 3.
func lDomain() *Domain {
	return &Domain{
		Points:   []float64{-1, -1, 0, -1, 0, 0, 1, 0, 1, 1, -1, 1, -0.5, 0.3},
		Segments: []int32{0, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 0},
		Tags:     []int32{1, 2, 3, 4, 5, 6},
	}
}

var testDomains = []struct {
	name    string
	d       func() *Domain
	area    float64 // closed form
	regions map[int32]float64
}{
	{"fin", finDomain, 7, map[int32]float64{1: 3, 2: 4}},
	{"plate with hole", plateDomain, plateArea, nil},
	{"L-shape", lDomain, 3, nil},
}

var testOptions = []struct {
	name string
	o    Options
}{
	{"no refinement", Options{NoRefinement: true}},
	{"angle", Options{}},
	{"angle and h", Options{H: 0.15}},
	{"size function", Options{Size: func(x, y float64) float64 { return 0.02 + 0.2*math.Hypot(x-1.5, y-3) }}},
	{"25 degrees", Options{MinAngle: 25, H: 0.3}},
}

// onSegment returns the tag of the segment of d that the edge p–q of m
// lies on, or -1.
func onSegment(d *Domain, m *Mesh, p, q int32) int32 {
	px, py := m.Vertex(int(p))
	qx, qy := m.Vertex(int(q))
	for s := range len(d.Segments) / 2 {
		a, b := d.Segments[2*s], d.Segments[2*s+1]
		ax, ay, bx, by := d.Points[2*a], d.Points[2*a+1], d.Points[2*b], d.Points[2*b+1]
		l := math.Hypot(bx-ax, by-ay)
		near := func(x, y float64) bool {
			// distance to the line and position along it
			c := ((x-ax)*(by-ay) - (y-ay)*(bx-ax)) / l
			t := ((x-ax)*(bx-ax) + (y-ay)*(by-ay)) / (l * l)
			return math.Abs(c) <= 1e-12*l && t >= -1e-12 && t <= 1+1e-12
		}
		if near(px, py) && near(qx, qy) {
			if d.Tags == nil {
				return 0
			}
			return d.Tags[s]
		}
	}
	return -1
}

// The area of the mesh equals the area of the domain (closed forms), the
// regions their parts, every angle is at least the bound (no input angle
// below 60° in these domains: Shewchuk 2002), every edge obeys the size
// bound, every boundary edge lies on a segment and carries its tag, and
// the refinement edges are the longest edges.
func TestTriangulateDomains(t *testing.T) {
	t.Parallel()
	const tol = 1e-12 // arithmetic: sums of a few thousand areas of size ~1
	for _, dc := range testDomains {
		for _, oc := range testOptions {
			d := dc.d()
			m, rep, err := Triangulate(d, oc.o)
			if err != nil {
				t.Fatalf("%s, %s: %v", dc.name, oc.name, err)
			}
			area, byRegion := 0.0, map[int32]float64{}
			for k := range m.NumTriangles() {
				area += m.Area(k)
				byRegion[m.Region[k]] += m.Area(k)
			}
			if math.Abs(area-dc.area) > tol*dc.area {
				t.Errorf("%s, %s: area %.17g, want %.17g", dc.name, oc.name, area, dc.area)
			}
			for r, want := range dc.regions {
				if math.Abs(byRegion[r]-want) > tol*dc.area {
					t.Errorf("%s, %s: region %d has area %.17g, want %.17g", dc.name, oc.name, r, byRegion[r], want)
				}
			}
			q, err := m.Quality()
			if err != nil {
				t.Fatal(err)
			}
			theta := oc.o.MinAngle
			if theta == 0 {
				theta = 20
			}
			if !oc.o.NoRefinement && q.MinAngle < theta*math.Pi/180*(1-1e-12) {
				t.Errorf("%s, %s: smallest angle %.6g°, want ≥ %g°", dc.name, oc.name, q.MinAngle*180/math.Pi, theta)
			}
			if rep.Sheltered != 0 && !oc.o.NoRefinement {
				t.Errorf("%s, %s: %d sheltered triangles with no small input angle", dc.name, oc.name, rep.Sheltered)
			}
			for e := range m.NumEdges() {
				a, b := m.Edge[2*e], m.Edge[2*e+1]
				l := m.EdgeLength(e)
				if oc.o.H > 0 && l > oc.o.H*(1+1e-12) {
					t.Errorf("%s, %s: edge %d has length %g > H", dc.name, oc.name, e, l)
				}
				if !m.IsBoundary(e) {
					continue
				}
				if tag := onSegment(d, m, a, b); tag != m.EdgeTag[e] {
					t.Errorf("%s, %s: boundary edge %d has tag %d, its segment %d", dc.name, oc.name, e, m.EdgeTag[e], tag)
				}
			}
			if oc.o.Size != nil {
				for k := range m.NumTriangles() {
					a, b, c := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
					gx := (m.X[2*a] + m.X[2*b] + m.X[2*c]) / 3
					gy := (m.X[2*a+1] + m.X[2*b+1] + m.X[2*c+1]) / 3
					if h := m.Diameter(k); h > oc.o.Size(gx, gy)*(1+1e-12) {
						t.Errorf("%s, %s: triangle %d has h = %g > Size = %g", dc.name, oc.name, k, h, oc.o.Size(gx, gy))
					}
				}
			}
			for k := range m.NumTriangles() {
				t0, t1, t2 := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
				if l := dist2(m.X, t1, t2); l < dist2(m.X, t0, t1) || l < dist2(m.X, t2, t0) {
					t.Fatalf("%s, %s: triangle %d: refinement edge is not a longest edge", dc.name, oc.name, k)
				}
			}
			checkConstrainedDelaunay(t, d, m, m.NumTriangles() <= 400)
			for p, v := range rep.Vertex {
				if v < 0 {
					continue
				}
				if x, y := m.Vertex(int(v)); x != d.Points[2*p] || y != d.Points[2*p+1] {
					t.Errorf("%s, %s: point %d is vertex %d at (%g, %g)", dc.name, oc.name, p, v, x, y)
				}
			}
			t.Logf("%s, %s: %d triangles, %d added, smallest angle %.4g°, %d unmatched of %d interior edges",
				dc.name, oc.name, m.NumTriangles(), rep.Added, rep.MinAngle, rep.Unmatched, m.NumEdges()-countBoundary(m))
		}
	}
}

func countBoundary(m *Mesh) int {
	n := 0
	for e := range m.NumEdges() {
		if m.IsBoundary(e) {
			n++
		}
	}
	return n
}

// checkConstrainedDelaunay checks that every edge of m that lies on no
// segment is locally Delaunay (the opposite vertex is not inside the
// circumcircle), which for a triangulation is equivalent to being
// constrained Delaunay (Lee and Lin, Generalized Delaunay triangulation
// for planar graphs, Discrete Comput. Geom. 1 (1986) 201–217; Chew 1989).
// With global set, it also checks the definition directly: no vertex
// visible from inside a triangle lies inside its circumcircle, where
// segments (the mesh edges on them) block the view.
func checkConstrainedDelaunay(t *testing.T, d *Domain, m *Mesh, global bool) {
	t.Helper()
	onSeg := make([]bool, m.NumEdges())
	var blocks []int32
	for e := range m.NumEdges() {
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		if onSegment(d, m, a, b) >= 0 {
			onSeg[e] = true
			blocks = append(blocks, a, b)
		}
		if m.IsBoundary(e) && !onSeg[e] {
			t.Fatalf("boundary edge %d lies on no segment", e)
		}
	}
	for e := range m.NumEdges() {
		if onSeg[e] || m.IsBoundary(e) {
			continue
		}
		k0, k1 := m.EdgeTri[2*e], m.EdgeTri[2*e+1]
		for _, v := range m.Tri[3*k1 : 3*k1+3] {
			if incircle(m.X, m.Tri[3*k0], m.Tri[3*k0+1], m.Tri[3*k0+2], v) > 0 {
				t.Fatalf("edge %d is not locally Delaunay", e)
			}
		}
	}
	if !global {
		return
	}
	for k := range m.NumTriangles() {
		a, b, c := m.Tri[3*k], m.Tri[3*k+1], m.Tri[3*k+2]
		gx := (m.X[2*a] + m.X[2*b] + m.X[2*c]) / 3
		gy := (m.X[2*a+1] + m.X[2*b+1] + m.X[2*c+1]) / 3
		for v := range int32(m.NumVertices()) {
			if incircle(m.X, a, b, c, v) <= 0 {
				continue
			}
			vx, vy := m.Vertex(int(v))
			visible := true
			for s := 0; s < len(blocks); s += 2 {
				p, q := blocks[s], blocks[s+1]
				if p == v || q == v {
					continue
				}
				px, py := m.Vertex(int(p))
				qx, qy := m.Vertex(int(q))
				if orientXY(px, py, qx, qy, gx, gy)*orientXY(px, py, qx, qy, vx, vy) < 0 &&
					orientXY(gx, gy, vx, vy, px, py)*orientXY(gx, gy, vx, vy, qx, qy) < 0 {
					visible = false
					break
				}
			}
			if visible {
				t.Fatalf("triangle %d: vertex %d is visible and inside its circumcircle", k, v)
			}
		}
	}
}

// A convex polygon with n points and k interior points, without
// refinement, has 2(n + k) − 2 − n triangles (Euler's formula for a
// triangulation of a point set with n points on its hull: common
// practice).
func TestTriangulateEulerCount(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		n    int
		in   []float64
	}{
		{"triangle", 3, nil},
		{"square", 4, nil},
		{"12-gon", 12, nil},
		{"12-gon and 5 points", 12, []float64{0, 0, 0.3, 0.1, -0.2, 0.4, 0.1, -0.5, -0.6, -0.1}},
		{"100-gon and a grid", 100, grid5()},
	} {
		d := &Domain{}
		polygon(d, tc.n, 0, 0, 1, 0.1, 1)
		d.Points = append(d.Points, tc.in...)
		m, rep, err := Triangulate(d, Options{NoRefinement: true})
		if err != nil {
			t.Fatalf("%s: %v", tc.name, err)
		}
		k := len(tc.in) / 2
		if want := 2*(tc.n+k) - 2 - tc.n; m.NumTriangles() != want {
			t.Errorf("%s: %d triangles, want %d", tc.name, m.NumTriangles(), want)
		}
		if rep.Added != 0 {
			t.Errorf("%s: %d vertices added without refinement", tc.name, rep.Added)
		}
		checkConstrainedDelaunay(t, d, m, true)
	}
}

func grid5() []float64 {
	var x []float64
	for i := range 5 {
		for j := range 5 {
			x = append(x, -0.5+0.25*float64(i), -0.5+0.25*float64(j))
		}
	}
	return x
}

// Bad input gives a located, matchable error.
func TestTriangulateRejects(t *testing.T) {
	t.Parallel()
	square := func() *Domain {
		return &Domain{Points: []float64{0, 0, 1, 0, 1, 1, 0, 1}, Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0}}
	}
	with := func(f func(d *Domain)) *Domain { d := square(); f(d); return d }
	for _, tc := range []struct {
		name                       string
		d                          *Domain
		o                          Options
		want                       error
		point, segment, hole, seed int
	}{
		{"odd points", with(func(d *Domain) { d.Points = d.Points[:7] }), Options{}, ErrLength, -1, -1, -1, -1},
		{"tags length", with(func(d *Domain) { d.Tags = []int32{1} }), Options{}, ErrLength, -1, -1, -1, -1},
		{"NaN", with(func(d *Domain) { d.Points[3] = math.NaN() }), Options{}, ErrNotFinite, 1, -1, -1, -1},
		{"index", with(func(d *Domain) { d.Segments[5] = 9 }), Options{}, ErrIndex, -1, 2, -1, -1},
		{"zero-length segment", with(func(d *Domain) { d.Segments = append(d.Segments, 2, 2) }), Options{}, ErrZeroLength, 2, 4, -1, -1},
		{"negative tag", with(func(d *Domain) { d.Tags = []int32{0, 0, -3, 0} }), Options{}, ErrNegativeTag, -1, 2, -1, -1},
		{"unclosed", with(func(d *Domain) { d.Segments = d.Segments[:6] }), Options{}, ErrUnclosed, 0, 0, -1, -1},
		{"no segments", with(func(d *Domain) { d.Segments = nil }), Options{}, ErrUnclosed, -1, -1, -1, -1},
		{"dangling interface", with(func(d *Domain) {
			d.Points = append(d.Points, 0.5, 0.5)
			d.Segments = append(d.Segments, 0, 4)
		}), Options{}, ErrUnclosed, 4, 4, -1, -1},
		{"duplicate point", with(func(d *Domain) {
			d.Points = append(d.Points, 1, 1)
		}), Options{}, ErrCoincident, 4, -1, -1, -1},
		{"self-intersecting (bow tie)", &Domain{Points: []float64{0, 0, 1, 0, 0, 1, 1, 1}, Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0}},
			Options{}, ErrIntersect, -1, 3, -1, -1},
		{"point inside a segment", with(func(d *Domain) {
			d.Points = append(d.Points, 0.5, 0, 0.7, 0.5, 0.3, 0.5)
			d.Segments = append(d.Segments, 4, 5, 5, 6, 6, 4)
		}), Options{}, ErrIntersect, 4, 0, -1, -1},
		{"repeated segment", with(func(d *Domain) { d.Segments = append(d.Segments, 1, 0) }), Options{}, ErrIntersect, -1, 4, -1, -1},
		{"overlapping collinear", &Domain{Points: []float64{0, 0, 2, 0, 2, 1, 0, 1, 1, 0, 3, 0, 2, -1},
			Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0, 4, 5, 5, 6, 6, 4}}, Options{}, ErrIntersect, 4, 0, -1, -1},
		{"hole outside", with(func(d *Domain) { d.Holes = []float64{2, 2} }), Options{}, ErrOutside, -1, -1, 0, -1},
		{"seed outside", with(func(d *Domain) {
			d.Seeds, d.SeedRegion = []float64{0.5, 0.5, -1, 0.5}, []int32{1, 2}
		}), Options{}, ErrOutside, -1, -1, -1, 1},
		{"seed in the hole", with(func(d *Domain) {
			d.Holes = []float64{0.5, 0.5}
			d.Seeds, d.SeedRegion = []float64{0.5, 0.6}, []int32{1}
		}), Options{}, ErrOutside, -1, -1, -1, 0},
		{"seeds disagree", with(func(d *Domain) {
			d.Seeds, d.SeedRegion = []float64{0.5, 0.5, 0.2, 0.3}, []int32{1, 2}
		}), Options{}, ErrSeedConflict, -1, -1, -1, 1},
		{"all a hole", with(func(d *Domain) { d.Holes = []float64{0.5, 0.5} }), Options{}, ErrEmpty, -1, -1, -1, -1},
		// A channel (a loop with its hole point) placed beside the body,
		// not in it: its segments would bound nothing.
		{"hole loop outside", with(func(d *Domain) {
			d.Points = append(d.Points, 2, 2, 3, 2, 2.5, 3)
			d.Segments = append(d.Segments, 4, 5, 5, 6, 6, 4)
			d.Holes = []float64{2.5, 2.3}
		}), Options{}, ErrDetached, -1, 4, -1, -1},
		// A loop drawn inside a hole: the hole reaches around it.
		{"loop inside a hole", &Domain{Points: []float64{0, 0, 4, 0, 4, 4, 0, 4, 1, 1, 3, 1, 3, 3, 1, 3, 1.5, 1.5, 2.5, 1.5, 2, 2.5},
			Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0, 4, 5, 5, 6, 6, 7, 7, 4, 8, 9, 9, 10, 10, 8},
			Holes:    []float64{1.2, 2.8, 2, 1.8}}, Options{}, ErrDetached, -1, 8, -1, -1},
		{"vertex limit", square(), Options{H: 1e-3, MaxVertices: 1000}, ErrVertexLimit, -2, -2, -2, -2},
		{"bad angle", square(), Options{MinAngle: 45}, ErrArgument, -2, -2, -2, -2},
		{"bad H", square(), Options{H: math.NaN()}, ErrArgument, -2, -2, -2, -2},
		{"bad size", square(), Options{Size: func(x, y float64) float64 { return -1 }}, ErrArgument, -2, -2, -2, -2},
	} {
		m, rep, err := Triangulate(tc.d, tc.o)
		if !errors.Is(err, tc.want) {
			t.Errorf("%s: err = %v, want %v", tc.name, err, tc.want)
			continue
		}
		if m != nil || rep != nil {
			t.Errorf("%s: a mesh or report with an error", tc.name)
		}
		if tc.point == -2 {
			continue
		}
		var de *DomainError
		if !errors.As(err, &de) {
			t.Errorf("%s: %v is not a *DomainError", tc.name, err)
			continue
		}
		if de.Point != tc.point || de.Segment != tc.segment || de.Hole != tc.hole || de.Seed != tc.seed {
			t.Errorf("%s: located at point %d, segment %d, hole %d, seed %d; want %d, %d, %d, %d (%v)",
				tc.name, de.Point, de.Segment, de.Hole, de.Seed, tc.point, tc.segment, tc.hole, tc.seed, err)
		}
	}
}

// A wedge with a 10° input angle: the triangles below 20° are only those
// whose shortest edge joins the two segments at equal distances from the
// apex (checked here by geometry, not by the mesher's own test), and
// every other triangle keeps the bound.
func TestTriangulateSmallInputAngle(t *testing.T) {
	t.Parallel()
	for _, deg := range []float64{10, 3, 45} {
		a := deg * math.Pi / 180
		d := &Domain{
			Points:   []float64{0, 0, 1, 0, 0.7 * math.Cos(a), 0.7 * math.Sin(a)},
			Segments: []int32{0, 1, 1, 2, 2, 0},
		}
		m, rep, err := Triangulate(d, Options{H: 0.1})
		if err != nil {
			t.Fatalf("%g°: %v", deg, err)
		}
		below := 0
		for k := range m.NumTriangles() {
			tri := m.Tri[3*k : 3*k+3]
			amin, at := math.Inf(1), 0
			for i := range 3 {
				if g := angle(m.X, tri[i], tri[(i+1)%3], tri[(i+2)%3]); g < amin {
					amin, at = g, i
				}
			}
			if amin >= 20*math.Pi/180 {
				continue
			}
			below++
			p, q := tri[(at+1)%3], tri[(at+2)%3]
			px, py := m.Vertex(int(p))
			qx, qy := m.Vertex(int(q))
			ok := shelteredByGeometry(d, px, py, qx, qy)
			if !ok {
				t.Errorf("%g°: triangle %d has a smallest angle %.4g° and is not sheltered by an input angle", deg, k, amin*180/math.Pi)
			}
		}
		if below != rep.Sheltered {
			t.Errorf("%g°: %d triangles below 20°, report says %d sheltered", deg, below, rep.Sheltered)
		}
		if rep.ShelterMin < 20 {
			t.Errorf("%g°: smallest angle outside the shelter %.4g°", deg, rep.ShelterMin)
		}
		t.Logf("%g°: %d triangles, %d sheltered, smallest angle %.4g°, outside the shelter %.4g°",
			deg, m.NumTriangles(), rep.Sheltered, rep.MinAngle, rep.ShelterMin)
	}
}

// shelteredByGeometry reports whether p and q lie on two segments of d
// that meet at an angle below 60°, at equal distances (to 1e-6 relative)
// from the point where they meet, by coordinates alone.
func shelteredByGeometry(d *Domain, px, py, qx, qy float64) bool {
	ns := len(d.Segments) / 2
	on := func(s int, x, y float64) bool {
		a, b := d.Segments[2*s], d.Segments[2*s+1]
		ax, ay, bx, by := d.Points[2*a], d.Points[2*a+1], d.Points[2*b], d.Points[2*b+1]
		l := math.Hypot(bx-ax, by-ay)
		c := ((x-ax)*(by-ay) - (y-ay)*(bx-ax)) / l
		t := ((x-ax)*(bx-ax) + (y-ay)*(by-ay)) / (l * l)
		return math.Abs(c) <= 1e-12*l && t >= -1e-12 && t <= 1+1e-12
	}
	for s1 := range ns {
		for s2 := range ns {
			if s1 == s2 || !on(s1, px, py) || !on(s2, qx, qy) {
				continue
			}
			for _, a := range d.Segments[2*s1 : 2*s1+2] {
				o1 := d.Segments[2*s1] + d.Segments[2*s1+1] - a
				var o2 int32 = -1
				switch a {
				case d.Segments[2*s2]:
					o2 = d.Segments[2*s2+1]
				case d.Segments[2*s2+1]:
					o2 = d.Segments[2*s2]
				}
				if o2 < 0 {
					continue
				}
				ax, ay := d.Points[2*a], d.Points[2*a+1]
				u1x, u1y := d.Points[2*o1]-ax, d.Points[2*o1+1]-ay
				u2x, u2y := d.Points[2*o2]-ax, d.Points[2*o2+1]-ay
				ang := math.Atan2(math.Abs(u1x*u2y-u1y*u2x), u1x*u2x+u1y*u2y)
				rp, rq := math.Hypot(px-ax, py-ay), math.Hypot(qx-ax, qy-ay)
				if ang < math.Pi/3 && rp > 0 && rq > 0 && math.Abs(rp-rq) <= 1e-6*max(rp, rq) {
					return true
				}
			}
		}
	}
	return false
}
