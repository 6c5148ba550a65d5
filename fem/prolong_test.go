package fem

import (
	"errors"
	"math"
	"math/rand/v2"
	"testing"

	"github.com/posteriori-fem/posteriori/mesh"
)

// A function carried to a refined mesh is the same function: equal at
// random points to rounding (refinement only subdivides triangles).
func TestProlongExact(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(1, 1))
	m, _ := mesh.LShape(2)
	for _, deg := range []int{1, 2} {
		s, _ := NewSpace(m, deg)
		u := NewFunction(s)
		for i := range u.U {
			u.U[i] = r.NormFloat64()
		}
		mc, uc := m, u
		for range 5 {
			marked := make([]bool, mc.NumTriangles())
			for k := range marked {
				marked[k] = r.Float64() < 0.3
			}
			f, p, err := mc.Refine(marked)
			if err != nil {
				t.Fatal(err)
			}
			fs, _ := NewSpace(f, deg)
			if uc, err = uc.Prolong(fs, p); err != nil {
				t.Fatal(err)
			}
			mc = f
		}
		for range 200 {
			x, y := 2*r.Float64()-1, 2*r.Float64()-1
			want, err := u.At(x, y)
			if err != nil {
				continue // in the removed quadrant
			}
			got, err := uc.At(x, y)
			if err != nil || math.Abs(got-want) > 1e-13*max(1, math.Abs(want)) {
				t.Fatalf("P%d at (%g, %g): %g, want %g (%v)", deg, x, y, got, want, err)
			}
		}
	}
}

func TestProlongErrors(t *testing.T) {
	t.Parallel()
	m, _ := mesh.Rectangle(0, 0, 1, 1, 2, 2)
	f, p, _ := m.Refine(make([]bool, m.NumTriangles()))
	s1, _ := NewSpace(m, 1)
	f2, _ := NewSpace(f, 2)
	f1, _ := NewSpace(f, 1)
	u := NewFunction(s1)
	if _, err := u.Prolong(f2, p); !errors.Is(err, ErrDegree) {
		t.Errorf("degree change: %v", err)
	}
	if _, err := u.Prolong(f1, nil); !errors.Is(err, ErrArgument) {
		t.Errorf("nil parents: %v", err)
	}
	if _, err := u.Prolong(f1, &mesh.Parents{Triangle: []int32{0}}); !errors.Is(err, ErrArgument) {
		t.Errorf("wrong parents: %v", err)
	}
}

// Carrying a field through a refinement followed by mesh.Reorder (parent
// map composed) gives the values of the transfer without the renumbering,
// permuted: bit for bit, for P1 and P2 (vertex values through
// Order.Vertex, edge values through Order.Edge).
func TestProlongReorder(t *testing.T) {
	t.Parallel()
	r := rand.New(rand.NewPCG(3, 3))
	m, _ := mesh.LShape(3)
	for _, deg := range []int{1, 2} {
		s, _ := NewSpace(m, deg)
		u := NewFunction(s)
		for i := range u.U {
			u.U[i] = r.NormFloat64()
		}
		mc := m
		for step := range 4 {
			marked := make([]bool, mc.NumTriangles())
			for k := range marked {
				marked[k] = r.Float64() < 0.3
			}
			f, p, err := mc.Refine(marked)
			if err != nil {
				t.Fatal(err)
			}
			g, o, err := f.Reorder()
			if err != nil {
				t.Fatal(err)
			}
			q, err := p.Compose(o)
			if err != nil {
				t.Fatal(err)
			}
			fs, _ := NewSpace(f, deg)
			gs, _ := NewSpace(g, deg)
			want, err := u.Prolong(fs, p)
			if err != nil {
				t.Fatal(err)
			}
			got, err := u.Prolong(gs, q)
			if err != nil {
				t.Fatal(err)
			}
			nv := g.NumVertices()
			for i, v := range o.Vertex {
				if got.U[i] != want.U[v] {
					t.Fatalf("P%d step %d: vertex %d: %v, want %v (old vertex %d)", deg, step, i, got.U[i], want.U[v], v)
				}
			}
			if deg == 2 {
				for e, oe := range o.Edge {
					if got.U[nv+e] != want.U[nv+int(oe)] {
						t.Fatalf("P2 step %d: edge %d: %v, want %v (old edge %d)", step, e, got.U[nv+e], want.U[nv+int(oe)], oe)
					}
				}
			}
			// The next step refines the renumbered mesh.
			mc, u = g, got
		}
	}
}
