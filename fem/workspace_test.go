package fem_test

import (
	"math"
	"slices"
	"testing"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// A Workspace changes where the arrays live, not what they hold: along a
// sequence of meshes that grow and then shrink (so that arrays are reused
// both with room to spare and after a larger system), the systems it
// assembles and their multigrid solutions equal, bit for bit, those of
// Assemble and a fresh solve; P1 and P2, with a source, a reaction term,
// Dirichlet and Neumann data.
//
// (Data invented for the test.)
func TestWorkspaceSame(t *testing.T) {
	t.Parallel()
	_, ls := known.LShape()
	withSource := *ls
	withSource.C = 3
	withSource.F = func(x, y float64) float64 { return math.Sin(3*x) + y*y }
	// Neumann data on tags 4 and 5, so that the boundary edges' entries
	// (one triangle each) stay in the system.
	withSource.Dirichlet = map[int32]fem.Func{1: ls.Dirichlet[1], 2: nil, 3: nil, 6: ls.Dirichlet[6]}
	withSource.Neumann = map[int32]fem.Func{4: func(x, y float64) float64 { return x - y }, 5: nil}
	m0, err := mesh.LShape(2)
	if err != nil {
		t.Fatal(err)
	}
	meshes := []*mesh.Mesh{m0}
	for range 3 {
		last := meshes[len(meshes)-1]
		marks := make([]bool, last.NumTriangles())
		for k := range marks {
			x, y := last.Vertex(int(last.Tri[3*k]))
			marks[k] = x*x+y*y < 0.3
		}
		next, _, err := last.Refine(marks)
		if err != nil {
			t.Fatal(err)
		}
		meshes = append(meshes, next)
	}
	meshes = append(meshes, meshes[1], meshes[3]) // shrink, then grow again
	for _, deg := range []int{1, 2} {
		for name, p := range map[string]*fem.Problem{"lshape": ls, "source": &withSource} {
			var w fem.Workspace
			for i, m := range meshes {
				s, err := fem.NewSpace(m, deg)
				if err != nil {
					t.Fatal(err)
				}
				want, err := fem.Assemble(s, p)
				if err != nil {
					t.Fatal(err)
				}
				got, err := w.Assemble(s, p)
				if err != nil {
					t.Fatal(err)
				}
				if !slices.Equal(got.A.RowPtr, want.A.RowPtr) || !slices.Equal(got.A.Col, want.A.Col) || !slices.Equal(got.A.Val, want.A.Val) ||
					!slices.Equal(got.B, want.B) || !slices.Equal(got.Dirichlet, want.Dirichlet) {
					t.Fatalf("P%d %s mesh %d: the workspace's system differs from Assemble's", deg, name, i)
				}
				st := fem.SolveSettings{Tol: 1e-10}
				uw, _, err := want.Solve(st)
				if err != nil {
					t.Fatal(err)
				}
				pg, err := got.Prepare(fem.Multigrid)
				if err != nil {
					t.Fatal(err)
				}
				ug, _, err := pg.Solve(st)
				if err != nil {
					t.Fatal(err)
				}
				if !slices.Equal(ug.U, uw.U) {
					t.Fatalf("P%d %s mesh %d: the workspace's solution differs", deg, name, i)
				}
			}
		}
	}
	var nilw *fem.Workspace
	s, _ := fem.NewSpace(m0, 1)
	if _, err := nilw.Assemble(s, ls); err == nil {
		t.Error("nil workspace: no error")
	}
}
