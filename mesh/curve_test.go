package mesh_test

import (
	"errors"
	"math"
	"slices"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// curveTol is the arithmetic tolerance of these tests: a few hundred
// units of rounding on unit-size coordinates.
const curveTol = 1e-13

// fan returns the unit disc as n triangles around the centre, boundary
// tag 0, following the unit circle: boundary vertices at angles 2πi/n.
func fan(t *testing.T, n int, curved bool) *mesh.Mesh {
	t.Helper()
	x := []float64{0, 0}
	var tri []int32
	for i := range n {
		a := 2 * math.Pi * float64(i) / float64(n)
		x = append(x, math.Cos(a), math.Sin(a))
		tri = append(tri, 0, int32(1+i), int32(1+(i+1)%n))
	}
	m, _, err := mesh.New(mesh.Arrays{X: x, Tri: tri})
	if err != nil {
		t.Fatal(err)
	}
	if curved {
		if m, err = m.WithCurves(map[int32]mesh.Curve{0: mesh.Circle{R: 1}}); err != nil {
			t.Fatal(err)
		}
	}
	return m
}

func totalArea(m *mesh.Mesh) float64 {
	s := 0.0
	for k := range m.NumTriangles() {
		s += m.Area(k)
	}
	return s
}

// ngon is the area of the regular n-gon inscribed in the circle of radius
// r: (n/2) r² sin(2π/n) (closed form).
func ngon(n int, r float64) float64 {
	return float64(n) / 2 * r * r * math.Sin(2*math.Pi/float64(n))
}

// TestCurvedUniformArea: uniform refinement of the 6-triangle fan puts the
// new boundary vertices at the arc midpoints, so after l levels the mesh is
// the regular 6·2^l-gon, whose area is the closed form, and π minus it
// falls by 4 per level (h² for chords: π − (n/2) sin(2π/n) ≈ (2π³/3)/n²,
// closed form). The straight fan keeps the hexagon's area.
func TestCurvedUniformArea(t *testing.T) {
	t.Parallel()
	curved, straight := fan(t, 6, true), fan(t, 6, false)
	prev := math.Pi - ngon(6, 1)
	for l := 1; l <= 6; l++ {
		var err error
		var p *mesh.Parents
		if curved, p, err = curved.RefineUniform(); err != nil {
			t.Fatal(err)
		}
		if straight, _, err = straight.RefineUniform(); err != nil {
			t.Fatal(err)
		}
		if len(p.Chord) != 0 {
			t.Fatalf("level %d: %d vertices left on the chord, want 0", l, len(p.Chord))
		}
		n := 6 << l
		// The rounding of a sum of N terms of size ≤ 1: common practice.
		sumTol := 4 * 0x1p-52 * float64(curved.NumTriangles())
		got, want := totalArea(curved), ngon(n, 1) // closed form
		if math.Abs(got-want) > sumTol {
			t.Errorf("level %d: area %.16g, want %.16g (regular %d-gon)", l, got, want, n)
		}
		if got, want := totalArea(straight), ngon(6, 1); math.Abs(got-want) > sumTol {
			t.Errorf("level %d: straight area %.16g, want the hexagon's %.16g", l, got, want)
		}
		gap := math.Pi - got
		// ratio → 4 (h², closed form above); band: common practice.
		if r := prev / gap; l > 1 && (r < 3.95 || r > 4.05) {
			t.Errorf("level %d: area error ratio %.4g, want about 4", l, r)
		}
		prev = gap
		onCircle(t, curved, nil)
	}
}

// onCircle checks that every vertex of a boundary edge that follows a
// curve lies on the unit circle about 0 (or the circle of radius 2), apart
// from the vertices in off.
func onCircle(t *testing.T, m *mesh.Mesh, off []int32) {
	t.Helper()
	for e := range m.NumEdges() {
		if m.EdgeCurve[e] < 0 {
			if m.IsBoundary(e) && m.EdgeTag[e] == 0 && m.Curves != nil && len(m.Curves) == 1 {
				t.Fatalf("boundary edge %d lost its curve", e)
			}
			continue
		}
		c := m.Curves[m.EdgeCurve[e]].(mesh.Circle)
		for _, v := range m.Edge[2*e : 2*e+2] {
			if slices.Contains(off, v) {
				continue
			}
			x, y := m.Vertex(int(v))
			if d := math.Abs(math.Hypot(x-c.X, y-c.Y) - c.R); d > curveTol {
				t.Fatalf("vertex %d of curved edge %d is %.3g off its circle", v, e, d)
			}
		}
	}
}

// TestCurvedRefineLocal refines near one boundary point many times: the
// new boundary vertices stay on the circle, the mesh stays valid (New
// accepts its arrays, every triangle counter-clockwise), and the area
// stays between the inscribed polygon of the boundary vertices (closed
// form: ½ Σ sin Δθ) and π.
func TestCurvedRefineLocal(t *testing.T) {
	t.Parallel()
	m := fan(t, 6, true)
	var off []int32
	for step := range 30 {
		marked := make([]bool, m.NumTriangles())
		for k := range marked {
			cx, cy := 0.0, 0.0
			for _, v := range m.Tri[3*k : 3*k+3] {
				x, y := m.Vertex(int(v))
				cx, cy = cx+x/3, cy+y/3
			}
			marked[k] = math.Hypot(cx-math.Cos(0.3), cy-math.Sin(0.3)) < 0.5*math.Pow(0.8, float64(step))
		}
		var p *mesh.Parents
		var err error
		if m, p, err = m.Refine(marked); err != nil {
			t.Fatal(err)
		}
		off = append(off, p.Chord...)
		if _, _, err := mesh.New(mesh.Arrays{X: m.X, Tri: m.Tri}); err != nil {
			t.Fatalf("step %d: %v", step, err)
		}
		for k := range m.NumTriangles() {
			if m.Area(k) <= 0 {
				t.Fatalf("step %d: triangle %d has area %g", step, k, m.Area(k))
			}
		}
	}
	if len(off) != 0 {
		t.Errorf("%d vertices left on the chord of a disc refined towards its boundary, want 0", len(off))
	}
	onCircle(t, m, off)
	// The inscribed polygon of the boundary vertices, by their angles.
	ab, _ := m.BoundaryEdges()
	poly := 0.0
	for i := 0; i < len(ab); i += 2 {
		x0, y0 := m.Vertex(int(ab[i]))
		x1, y1 := m.Vertex(int(ab[i+1]))
		poly += 0.5 * (x0*y1 - x1*y0) // ½ sin Δθ on the unit circle
	}
	if got := totalArea(m); math.Abs(got-poly) > curveTol || got >= math.Pi {
		t.Errorf("area %.16g, want the inscribed polygon's %.16g, below π", got, poly)
	}
}

// hole is one triangle outside the unit circle: the apex (ax, 0) and the
// chord of the circle from angle 60° to -60°, which follows the circle
// (tag 1). Bisecting the chord moves its midpoint from (0.5, 0) to (1, 0),
// towards the apex.
func hole(t *testing.T, ax float64) *mesh.Mesh {
	t.Helper()
	s := math.Sqrt(3) / 2
	m, _, err := mesh.New(mesh.Arrays{
		X:   []float64{ax, 0, 0.5, s, 0.5, -s},
		Tri: []int32{0, 1, 2},
		Bnd: []int32{1, 2}, BndTag: []int32{1},
	})
	if err != nil {
		t.Fatal(err)
	}
	if m, err = m.WithCurves(map[int32]mesh.Curve{1: mesh.Circle{R: 1}}); err != nil {
		t.Fatal(err)
	}
	return m
}

// TestCurvedNearInteriorVertex: moving the midpoint onto the curve scales
// the area of both children by (a − 1)/(a − 0.5) for the apex at (a, 0)
// (closed form). Below MinCurveArea = ½ (a < 1.5) the vertex stays at the
// chord midpoint and Parents.Chord names it; above, it moves.
func TestCurvedNearInteriorVertex(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name   string
		apex   float64
		onPath bool // whether the new vertex goes on the circle
	}{
		{"far", 3, true},        // ratio 0.8
		{"just", 1.55, true},    // ratio 0.5238
		{"close", 1.45, false},  // ratio 0.4737
		{"inside", 1.05, false}, // ratio 0.0909
		{"beyond", 0.9, false},  // the apex inside the circle: the move would invert both children
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			for _, uniform := range []bool{false, true} {
				m := hole(t, tc.apex)
				var fine *mesh.Mesh
				var p *mesh.Parents
				var err error
				if uniform {
					fine, p, err = m.RefineUniform()
				} else {
					fine, p, err = m.Refine([]bool{true})
				}
				if err != nil {
					t.Fatal(err)
				}
				v := int32(3) // the only new vertex
				if uniform {
					v = int32(3 + slices.IndexFunc([]int{0, 1, 2}, func(e int) bool { return m.EdgeCurve[e] >= 0 }))
				}
				x, y := fine.Vertex(int(v))
				wantX := 0.5
				if tc.onPath {
					wantX = 1
				}
				if math.Abs(x-wantX) > curveTol || math.Abs(y) > curveTol {
					t.Errorf("uniform=%v: new vertex at (%g, %g), want (%g, 0)", uniform, x, y, wantX)
				}
				if got := slices.Contains(p.Chord, v); got == tc.onPath {
					t.Errorf("uniform=%v: Parents.Chord = %v, vertex %d listed: %v", uniform, p.Chord, v, got)
				}
				for k := range fine.NumTriangles() {
					if fine.Area(k) <= 0 {
						t.Errorf("uniform=%v: triangle %d has area %g", uniform, k, fine.Area(k))
					}
				}
				// Renumbered, the mesh keeps its curves and the parent map its
				// chord list: the same points, under their new numbers.
				r, o, err := fine.Reorder()
				if err != nil {
					t.Fatal(err)
				}
				q, err := p.Compose(o)
				if err != nil {
					t.Fatal(err)
				}
				if len(q.Chord) != len(p.Chord) || (r.EdgeCurve == nil) != (fine.EdgeCurve == nil) {
					t.Errorf("uniform=%v: after Reorder, chord list %v (was %v), curves kept: %v", uniform, q.Chord, p.Chord, r.EdgeCurve != nil)
				}
				for i, c := range q.Chord {
					cx, cy := r.Vertex(int(c))
					px, py := fine.Vertex(int(p.Chord[i]))
					if cx != px || cy != py {
						t.Errorf("uniform=%v: chord vertex %d at (%g, %g) after Reorder, (%g, %g) before", uniform, c, cx, cy, px, py)
					}
				}
				// Renumber in place gives the same mesh, curves included.
				c := *fine
				for _, a := range []*[]int32{&c.Tri, &c.Region, &c.Edge, &c.TriEdge, &c.EdgeTri, &c.EdgeTag, &c.EdgeCurve} {
					*a = slices.Clone(*a)
				}
				c.X = slices.Clone(c.X)
				if _, err := c.Renumber(); err != nil || !slices.Equal(c.EdgeCurve, r.EdgeCurve) || !slices.Equal(c.X, r.X) || len(c.Curves) != len(r.Curves) {
					t.Errorf("uniform=%v: Renumber: %v, or curves or coordinates differ from Reorder's", uniform, err)
				}
			}
		})
	}
}

// TestTriangulateCurved meshes the unit disc and the annulus 1 < r < 2
// from four points per circle: every boundary edge carries its circle,
// every boundary vertex lies on it, and the area is the inscribed
// polygon's (closed form ½ R² Σ sin Δθ), within π R² − ... of the exact.
func TestTriangulateCurved(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name  string
		d     *mesh.Domain
		exact float64 // π(R² − r²), closed form
	}{
		{"disc", &mesh.Domain{
			Points: []float64{1, 0, 0, 1, -1, 0, 0, -1}, Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0},
			Curves: []mesh.Curve{mesh.Circle{R: 1}}, SegCurve: []int32{0, 0, 0, 0},
		}, math.Pi},
		{"annulus", &mesh.Domain{
			Points:   []float64{2, 0, 0, 2, -2, 0, 0, -2, 1, 0, 0, -1, -1, 0, 0, 1},
			Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0, 4, 5, 5, 6, 6, 7, 7, 4},
			Tags:     []int32{1, 1, 1, 1, 0, 0, 0, 0}, Holes: []float64{0, 0},
			Curves: []mesh.Curve{mesh.Circle{R: 2}, mesh.Circle{R: 1}}, SegCurve: []int32{0, 0, 0, 0, 1, 1, 1, 1},
		}, 3 * math.Pi},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			for _, h := range []float64{0, 0.1} {
				m, rep, err := mesh.Triangulate(tc.d, mesh.Options{H: h})
				if err != nil {
					t.Fatal(err)
				}
				if rep.OffCurve != 0 {
					t.Errorf("H=%g: %d vertices off the curve, want 0", h, rep.OffCurve)
				}
				if rep.MinAngle < 20 {
					t.Errorf("H=%g: smallest angle %.4g°, want ≥ 20° (Shewchuk 2002)", h, rep.MinAngle)
				}
				poly := 0.0
				ab, _ := m.BoundaryEdges()
				for i := 0; i < len(ab); i += 2 {
					e := -1
					for f := range m.NumEdges() {
						if (m.Edge[2*f] == min(ab[i], ab[i+1])) && m.Edge[2*f+1] == max(ab[i], ab[i+1]) {
							e = f
						}
					}
					if m.EdgeCurve[e] < 0 {
						t.Fatalf("H=%g: boundary edge %d follows no curve", h, e)
					}
					x0, y0 := m.Vertex(int(ab[i]))
					x1, y1 := m.Vertex(int(ab[i+1]))
					poly += 0.5 * (x0*y1 - x1*y0)
				}
				onCircle(t, m, nil)
				got := totalArea(m)
				if math.Abs(got-poly) > curveTol*10 || got >= tc.exact {
					t.Errorf("H=%g: area %.16g, want the inscribed polygon's %.16g, below %.16g", h, got, poly, tc.exact)
				}
				// Refinement keeps the vertices on the circles and brings
				// the area to the exact one at the rate h² (≈ 4 per
				// uniform level, closed form of the n-gon).
				prev := tc.exact - got
				for l := 1; l <= 3; l++ {
					if m, _, err = m.RefineUniform(); err != nil {
						t.Fatal(err)
					}
					onCircle(t, m, nil)
					gap := tc.exact - totalArea(m)
					if r := prev / gap; r < 3.9 || r > 4.1 { // band: common practice
						t.Errorf("H=%g level %d: area error ratio %.4g, want about 4", h, l, r)
					}
					prev = gap
				}
			}
		})
	}
}

// TestCurveErrors: bad curves give matchable, located errors.
func TestCurveErrors(t *testing.T) {
	t.Parallel()
	disc := func() *mesh.Domain {
		return &mesh.Domain{
			Points: []float64{1, 0, 0, 1, -1, 0, 0, -1}, Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0},
			Curves: []mesh.Curve{mesh.Circle{R: 1}}, SegCurve: []int32{0, 0, 0, 0},
		}
	}
	nan := mesh.ProjectFunc(func(x, y float64) (float64, float64) { return math.NaN(), y })
	for _, tc := range []struct {
		name    string
		edit    func(d *mesh.Domain)
		want    error
		point   int
		segment int
	}{
		{"off circle", func(d *mesh.Domain) { d.Points[2] = 0.01 }, mesh.ErrOffCurve, 1, 0},
		{"NaN projection", func(d *mesh.Domain) { d.Curves[0] = nan }, mesh.ErrNotFinite, 0, 0},
		{"zero radius", func(d *mesh.Domain) { d.Curves[0] = mesh.Circle{} }, mesh.ErrCurve, -1, 0},
		{"nil curve", func(d *mesh.Domain) { d.Curves[0] = nil }, mesh.ErrCurve, -1, 0},
		{"index", func(d *mesh.Domain) { d.SegCurve[2] = 1 }, mesh.ErrIndex, -1, 2},
		{"length", func(d *mesh.Domain) { d.SegCurve = d.SegCurve[:3] }, mesh.ErrLength, -1, -1},
		{"half circle", func(d *mesh.Domain) { // a chord through the centre: the arc is undefined
			d.Points = []float64{1, 0, -1, 0, 0, -1}
			d.Segments = []int32{0, 1, 1, 2, 2, 0}
			d.SegCurve = []int32{0, 0, 0}
		}, mesh.ErrNotFinite, -1, 0},
	} {
		t.Run(tc.name, func(t *testing.T) {
			t.Parallel()
			d := disc()
			tc.edit(d)
			_, _, err := mesh.Triangulate(d, mesh.Options{})
			var de *mesh.DomainError
			if !errors.Is(err, tc.want) || !errors.As(err, &de) {
				t.Fatalf("err = %v, want a *DomainError wrapping %v", err, tc.want)
			}
			if de.Point != tc.point || de.Segment != tc.segment {
				t.Errorf("located at point %d, segment %d; want %d, %d (%v)", de.Point, de.Segment, tc.point, tc.segment, err)
			}
		})
	}

	// WithCurves and the refinements.
	m := fan(t, 6, false)
	if _, err := m.WithCurves(map[int32]mesh.Curve{0: mesh.Circle{R: 1.1}}); !errors.Is(err, mesh.ErrOffCurve) {
		t.Errorf("WithCurves, vertices off the circle: err = %v, want ErrOffCurve", err)
	}
	if _, err := m.WithCurves(map[int32]mesh.Curve{3: mesh.Circle{R: 1}}); !errors.Is(err, mesh.ErrCurve) {
		t.Errorf("WithCurves, a tag no edge carries: err = %v, want ErrCurve", err)
	}
	if _, err := m.WithCurves(map[int32]mesh.Curve{0: mesh.Circle{R: math.Inf(1)}}); !errors.Is(err, mesh.ErrCurve) {
		t.Errorf("WithCurves, infinite radius: err = %v, want ErrCurve", err)
	}
	broken := false
	f := mesh.ProjectFunc(func(x, y float64) (float64, float64) {
		if broken {
			return math.Inf(1), 0
		}
		return mesh.Circle{R: 1}.Project(x, y)
	})
	c, err := m.WithCurves(map[int32]mesh.Curve{0: f})
	if err != nil {
		t.Fatal(err)
	}
	broken = true
	for name, refine := range map[string]func() error{
		"Refine":        func() error { _, _, err := c.Refine(make([]bool, c.NumTriangles())); return err },
		"RefineUniform": func() error { _, _, err := c.RefineUniform(); return err },
	} {
		err := refine()
		if name == "Refine" {
			if err != nil {
				t.Errorf("Refine with nothing marked: %v", err)
			}
			all := make([]bool, c.NumTriangles())
			for k := range all {
				all[k] = true
			}
			_, _, err = c.Refine(all)
		}
		var ce *mesh.CurveError
		if !errors.Is(err, mesh.ErrNotFinite) || !errors.As(err, &ce) || ce.Edge < 0 {
			t.Errorf("%s with an infinite projection: err = %v, want a *CurveError at an edge wrapping ErrNotFinite", name, err)
		}
	}
}
