package mesh

import (
	"math"
	"testing"
)

func TestRefineUniform(t *testing.T) {
	t.Parallel()
	const tol = 1e-13
	gens := []struct {
		name string
		gen  func() (*Mesh, error)
	}{
		{"Rectangle", func() (*Mesh, error) { return Rectangle(0, 0, 2, 1, 3, 2) }},
		{"LShape", func() (*Mesh, error) { return LShape(1) }},
		{"Slit", func() (*Mesh, error) { return Slit(1) }},
		{"Quadrants", func() (*Mesh, error) { return Quadrants(1) }},
	}
	for _, g := range gens {
		t.Run(g.name, func(t *testing.T) {
			t.Parallel()
			m, err := g.gen()
			if err != nil {
				t.Fatal(err)
			}
			q0 := mustQuality(t, m)
			for level := range 4 {
				f, p, err := m.RefineUniform()
				if err != nil {
					t.Fatal(err)
				}
				checkTopology(t, f)
				if f.NumTriangles() != 4*m.NumTriangles() || f.NumVertices() != m.NumVertices()+m.NumEdges() {
					t.Fatalf("level %d: %d triangles, %d vertices", level, f.NumTriangles(), f.NumVertices())
				}
				// Each child lies in its parent and keeps its region; the
				// children's areas add up to the parent's.
				sum := make([]float64, m.NumTriangles())
				for k := range f.NumTriangles() {
					pk := p.Triangle[k]
					sum[pk] += f.Area(k)
					if f.Region[k] != m.Region[pk] {
						t.Fatalf("child %d region %d, parent %d region %d", k, f.Region[k], pk, m.Region[pk])
					}
				}
				for k, s := range sum {
					if math.Abs(s-m.Area(k)) > tol*m.Area(k) {
						t.Fatalf("children of %d have area %g, want %g", k, s, m.Area(k))
					}
				}
				checkVertexMap(t, m, f, p)
				// Boundary tags: the total length per tag is kept.
				if got, want := tagLengths(f), tagLengths(m); !closeMaps(got, want, tol) {
					t.Fatalf("tag lengths %v, want %v", got, want)
				}
				// Newest-vertex bisection of these right isosceles meshes
				// makes only similar triangles (Mitchell 1991): the angles
				// do not change.
				q := mustQuality(t, f)
				if math.Abs(q.MinAngle-q0.MinAngle) > tol || math.Abs(q.MaxAngle-q0.MaxAngle) > tol {
					t.Fatalf("angles [%g, %g], want [%g, %g]", q.MinAngle, q.MaxAngle, q0.MinAngle, q0.MaxAngle)
				}
				if math.Abs(q.HMax-mustQuality(t, m).HMax/2) > tol {
					t.Fatalf("h_max %g, want half of %g", q.HMax, mustQuality(t, m).HMax)
				}
				m = f
			}
		})
	}
}

func tagLengths(m *Mesh) map[int32]float64 {
	l := map[int32]float64{}
	for e := range m.NumEdges() {
		if m.IsBoundary(e) {
			l[m.EdgeTag[e]] += m.EdgeLength(e)
		}
	}
	return l
}

func closeMaps(a, b map[int32]float64, tol float64) bool {
	if len(a) != len(b) {
		return false
	}
	for k, v := range a {
		if math.Abs(v-b[k]) > tol*max(1, math.Abs(v)) {
			return false
		}
	}
	return true
}

func TestQuality(t *testing.T) {
	t.Parallel()
	// One triangle with sides 3, 4, 5 (classical right triangle).
	m, _, err := New(Arrays{X: []float64{0, 0, 4, 0, 0, 3}, Tri: []int32{0, 1, 2}})
	if err != nil {
		t.Fatal(err)
	}
	q := mustQuality(t, m)
	const tol = 1e-14
	if math.Abs(q.MaxAngle-math.Pi/2) > tol || math.Abs(q.MinAngle-math.Atan2(3, 4)) > tol {
		t.Errorf("angles %g %g, want %g %g", q.MinAngle, q.MaxAngle, math.Atan2(3, 4), math.Pi/2)
	}
	if q.HMin != 5 || q.HMax != 5 || q.AreaMin != 6 || q.AreaMax != 6 {
		t.Errorf("quality %+v, want h 5 and area 6", q)
	}
}
