package adapt

import (
	"context"
	"runtime"
	"slices"
	"testing"

	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/fem/known"
	"github.com/posteriori-fem/posteriori/mesh"
)

// The same input gives bit-identical meshes, solutions, indicators and
// marks with GOMAXPROCS 1 and 2 and across repeated runs: every parallel
// loop writes per index and sums in index order.
func TestLoopDeterminism(t *testing.T) {
	defer runtime.GOMAXPROCS(runtime.GOMAXPROCS(0))
	lex, lp := known.LShape()
	kex, kp := known.Kellogg()
	cases := []struct {
		name string
		mesh func() (*mesh.Mesh, error)
		ex   fem.Exact
		p    *fem.Problem
		est  estimate.Estimator
		deg  int
	}{
		{"LShape P1 residual", func() (*mesh.Mesh, error) { return mesh.LShape(2) }, lex, lp, estimate.Residual{}, 1},
		{"LShape P2 spr", func() (*mesh.Mesh, error) { return mesh.LShape(2) }, lex, lp, estimate.Recovery{Method: estimate.SPR}, 2},
		{"Kellogg P1 averaging", func() (*mesh.Mesh, error) { return mesh.Quadrants(2) }, kex, kp, estimate.Recovery{}, 1},
	}
	budget := 10000
	if testing.Short() {
		budget = 3000
	}
	for _, tc := range cases {
		var ref *Result
		for i, procs := range []int{1, 2, 2} {
			runtime.GOMAXPROCS(procs)
			m, _ := tc.mesh()
			ex := tc.ex
			res, err := Run(context.Background(), Problem{Mesh: m, Degree: tc.deg, Data: tc.p, Exact: &ex},
				Settings{MaxDOFs: budget}, Method{Estimator: tc.est})
			if err != nil {
				t.Fatal(err)
			}
			if i == 0 {
				ref = res
				continue
			}
			if len(res.Steps) != len(ref.Steps) {
				t.Fatalf("%s GOMAXPROCS=%d: %d steps, first run %d", tc.name, procs, len(res.Steps), len(ref.Steps))
			}
			for s := range res.Steps {
				a, b := res.Steps[s], ref.Steps[s]
				if a.Estimate != b.Estimate || a.Error != b.Error || a.Marked != b.Marked || a.DOFs != b.DOFs || a.Iterations != b.Iterations {
					t.Fatalf("%s GOMAXPROCS=%d step %d: %+v vs %+v", tc.name, procs, s, a, b)
				}
			}
			ma, mb := res.Mesh, ref.Mesh
			if !slices.Equal(ma.X, mb.X) || !slices.Equal(ma.Tri, mb.Tri) || !slices.Equal(ma.EdgeTag, mb.EdgeTag) {
				t.Fatalf("%s GOMAXPROCS=%d: final meshes differ", tc.name, procs)
			}
			if !slices.Equal(res.Solution.U, ref.Solution.U) || !slices.Equal(res.Indicators.Eta2, ref.Indicators.Eta2) {
				t.Fatalf("%s GOMAXPROCS=%d: solutions or indicators differ", tc.name, procs)
			}
		}
		t.Logf("%s: %d steps to %d DOFs, identical in 4 runs", tc.name, len(ref.Steps), ref.Steps[len(ref.Steps)-1].DOFs)
	}
}
