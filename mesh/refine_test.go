package mesh

import (
	"math"
	"math/rand/v2"
	"testing"
)

// checkConforming verifies the topology of m and that no vertex sits at
// the midpoint of an edge (bisection would put a hanging node exactly
// there).
func checkConforming(t *testing.T, m *Mesh) {
	t.Helper()
	checkTopology(t, m)
	at := make(map[[2]float64]int, m.NumVertices())
	for v := range m.NumVertices() {
		x, y := m.Vertex(v)
		at[[2]float64{x, y}]++
	}
	// Only interior edges can carry a hanging node; an edge with one
	// triangle and no boundary tag is caught by checkTopology.
	for e := range m.NumEdges() {
		if m.IsBoundary(e) {
			continue
		}
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		mid := [2]float64{0.5 * (m.X[2*a] + m.X[2*b]), 0.5 * (m.X[2*a+1] + m.X[2*b+1])}
		if at[mid] > 0 {
			t.Fatalf("edge %d (%d-%d) has a vertex at its midpoint: hanging node", e, a, b)
		}
	}
	// Euler: V − E + T is that of the domain (1 for the simply connected
	// test domains).
	if chi := m.NumVertices() - m.NumEdges() + m.NumTriangles(); chi != 1 {
		t.Fatalf("V − E + T = %d", chi)
	}
}

var generators = []struct {
	name string
	gen  func() (*Mesh, error)
}{
	{"Rectangle", func() (*Mesh, error) { return Rectangle(0, 0, 2, 1, 2, 1) }},
	{"LShape", func() (*Mesh, error) { return LShape(1) }},
	{"Slit", func() (*Mesh, error) { return Slit(1) }},
	{"Quadrants", func() (*Mesh, error) { return Quadrants(1) }},
}

// 1,000 rounds of random marking keep every mesh conforming, with regions
// and boundary lengths per tag kept and parents that contain their
// children.
func TestRefineRandomConforming(t *testing.T) {
	t.Parallel()
	for _, g := range generators {
		t.Run(g.name, func(t *testing.T) {
			t.Parallel()
			m, err := g.gen()
			if err != nil {
				t.Fatal(err)
			}
			r := rand.New(rand.NewPCG(1, 1))
			lengths := tagLengths(m)
			rounds := 1000
			if testing.Short() {
				rounds = 200
			}
			for round := range rounds {
				marked := make([]bool, m.NumTriangles())
				// Mark a few triangles, more often the small ones near a
				// corner, so the mesh stays small but deep.
				for range 1 + r.IntN(3) {
					marked[r.IntN(len(marked))] = true
				}
				f, p, err := m.Refine(marked)
				if err != nil {
					t.Fatal(err)
				}
				if round%50 == 0 || round == rounds-1 {
					checkConforming(t, f)
					checkParents(t, m, f, p, marked)
					if got := tagLengths(f); !closeMaps(got, lengths, 1e-12) {
						t.Fatalf("round %d: tag lengths %v, want %v", round, got, lengths)
					}
				}
				m = f
				if m.NumTriangles() > 20000 {
					m, _ = g.gen()
				}
			}
		})
	}
}

// checkParents verifies that every marked triangle was bisected, that each
// child lies in its parent with the parent's region, and that the children
// of each parent fill it.
func checkParents(t *testing.T, old, m *Mesh, p *Parents, marked []bool) {
	t.Helper()
	if len(p.Triangle) != m.NumTriangles() || p.OldVertices != old.NumVertices() || len(p.Vertex) != m.NumVertices() {
		t.Fatalf("parents sized %d %d %d", len(p.Triangle), p.OldVertices, len(p.Vertex))
	}
	area := make([]float64, old.NumTriangles())
	count := make([]int, old.NumTriangles())
	for k, pk := range p.Triangle {
		area[pk] += m.Area(k)
		count[pk]++
		if m.Region[k] != old.Region[pk] {
			t.Fatalf("child %d region %d, parent %d region %d", k, m.Region[k], pk, old.Region[pk])
		}
		for _, v := range m.Tri[3*k : 3*k+3] {
			x, y := m.Vertex(int(v))
			if b := old.Barycentric(int(pk), x, y); min(b[0], b[1], b[2]) < -1e-12 {
				t.Fatalf("child %d has vertex %d outside parent %d", k, v, pk)
			}
		}
	}
	for k := range area {
		if math.Abs(area[k]-old.Area(k)) > 1e-12*old.Area(k) {
			t.Fatalf("children of %d cover %g of %g", k, area[k], old.Area(k))
		}
		if marked[k] && count[k] < 2 {
			t.Fatalf("marked triangle %d was not bisected", k)
		}
	}
	checkVertexMap(t, old, m, p)
}

// checkVertexMap verifies Parents.Vertex: every old vertex appears once,
// at its old coordinates, every other vertex is the midpoint of the old
// edge it names, and no old edge is named twice.
func checkVertexMap(t *testing.T, old, m *Mesh, p *Parents) {
	t.Helper()
	if len(p.Vertex) != m.NumVertices() {
		t.Fatalf("vertex map has %d entries for %d vertices", len(p.Vertex), m.NumVertices())
	}
	seen := make([]bool, old.NumVertices()+old.NumEdges())
	for i, v := range p.Vertex {
		if v < 0 || int(v) >= len(seen) || seen[v] {
			t.Fatalf("vertex %d maps to %d (out of range or twice)", i, v)
		}
		seen[v] = true
		x, y := m.Vertex(i)
		if int(v) < p.OldVertices {
			if x != old.X[2*v] || y != old.X[2*v+1] {
				t.Fatalf("vertex %d is not old vertex %d", i, v)
			}
			continue
		}
		e := int(v) - p.OldVertices
		a, b := old.Edge[2*e], old.Edge[2*e+1]
		if x != 0.5*(old.X[2*a]+old.X[2*b]) || y != 0.5*(old.X[2*a+1]+old.X[2*b+1]) {
			t.Fatalf("new vertex %d is not the midpoint of old edge %d", i, e)
		}
	}
	for v := range old.NumVertices() {
		if !seen[v] {
			t.Fatalf("old vertex %d is missing", v)
		}
	}
}

// shape returns the similarity class of triangle k: its side lengths,
// sorted, divided by the longest, rounded to 1e-9.
func shape(m *Mesh, k int) [2]float64 {
	t := m.Tri[3*k : 3*k+3]
	l := []float64{math.Sqrt(dist2(m.X, t[0], t[1])), math.Sqrt(dist2(m.X, t[1], t[2])), math.Sqrt(dist2(m.X, t[2], t[0]))}
	if l[0] > l[1] {
		l[0], l[1] = l[1], l[0]
	}
	if l[1] > l[2] {
		l[1], l[2] = l[2], l[1]
	}
	if l[0] > l[1] {
		l[0], l[1] = l[1], l[0]
	}
	return [2]float64{math.Round(l[0]/l[2]*1e9) / 1e9, math.Round(l[1]/l[2]*1e9) / 1e9}
}

// Newest-vertex bisection makes at most four similarity classes of
// triangles from each initial triangle (Sewell 1972; Mitchell 1991). The
// classes are those of the first generations; deep local refinement makes
// no new ones, so the minimum angle never falls below theirs.
func TestRefineSimilarityClasses(t *testing.T) {
	t.Parallel()
	// A scalene triangle, labelled with its longest edge as refinement edge
	// and with it not.
	for _, x := range [][]float64{{0.3, 0.8, 0, 0, 1, 0}, {0, 0, 1, 0, 0.3, 0.8}} {
		root, _, err := New(Arrays{X: x, Tri: []int32{0, 1, 2}})
		if err != nil {
			t.Fatal(err)
		}
		classes := map[[2]float64]bool{}
		minAngle := math.Inf(1)
		u := root
		for range 6 { // six rounds of bisecting every triangle
			for k := range u.NumTriangles() {
				classes[shape(u, k)] = true
			}
			minAngle = min(minAngle, mustQuality(t, u).MinAngle)
			all := make([]bool, u.NumTriangles())
			for k := range all {
				all[k] = true
			}
			u, _, _ = u.Refine(all)
		}
		if len(classes) > 4 {
			t.Fatalf("%d similarity classes in the first generations, want at most 4", len(classes))
		}
		r := rand.New(rand.NewPCG(2, 2))
		m := root
		for range 400 {
			marked := make([]bool, m.NumTriangles())
			for range 1 + r.IntN(4) {
				marked[r.IntN(len(marked))] = true
			}
			m, _, _ = m.Refine(marked)
		}
		for k := range m.NumTriangles() {
			if !classes[shape(m, k)] {
				t.Fatalf("triangle %d has shape %v, not among the %d classes %v", k, shape(m, k), len(classes), classes)
			}
		}
		if q := mustQuality(t, m); q.MinAngle < minAngle-1e-12 {
			t.Errorf("minimum angle %g below the classes' %g", q.MinAngle, minAngle)
		}
		t.Logf("%d classes, minimum angle %.4f rad, %d triangles after random refinement", len(classes), minAngle, m.NumTriangles())
	}
}

// The closure is local: the triangles created over a sequence of
// refinements are at most a constant times the triangles marked (Binev,
// Dahmen and DeVore 2004, for an initial labelling where each refinement
// edge is shared as refinement edge, as the generators make it).
func TestRefineClosureLocal(t *testing.T) {
	t.Parallel()
	for _, g := range generators[1:3] { // LShape and Slit
		m, _ := g.gen()
		m, _, _ = m.RefineUniform()
		n0 := m.NumTriangles()
		r := rand.New(rand.NewPCG(3, 3))
		marked := 0
		worst := 0.0
		for round := range 60 {
			mk := make([]bool, m.NumTriangles())
			// Grade towards the corner or tip, plus a few random marks.
			for k := range m.NumTriangles() {
				for _, v := range m.Tri[3*k : 3*k+3] {
					if x, y := m.Vertex(int(v)); x == 0 && y == 0 {
						mk[k] = true
					}
				}
				if r.Float64() < 0.02 {
					mk[k] = true
				}
			}
			for _, b := range mk {
				if b {
					marked++
				}
			}
			m, _, _ = m.Refine(mk)
			c := float64(m.NumTriangles()-n0) / float64(marked)
			if round%10 == 9 {
				t.Logf("%s round %d: %d triangles, constant %.3f", g.name, round+1, m.NumTriangles(), c)
			}
			if round >= 5 {
				worst = max(worst, c)
			}
		}
		t.Logf("%s: %d triangles created for %d marked: constant %.3f (largest after round 5: %.3f)",
			g.name, m.NumTriangles()-n0, marked, float64(m.NumTriangles()-n0)/float64(marked), worst)
		if worst > closureBound {
			t.Errorf("%s: created/marked reached %.3f, above %g", g.name, worst, closureBound)
		}
	}
}

// closureBound is ours: observed constants are about 3 (see the test log);
// BDV's proof gives a far larger constant.
const closureBound = 6.0
