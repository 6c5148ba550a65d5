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
