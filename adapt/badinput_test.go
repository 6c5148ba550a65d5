package adapt_test

import (
	"context"
	"errors"
	"math"
	"strings"
	"testing"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Every public entry point meets the bad inputs a user can produce with a
// specific, matchable error: never a panic, never a NaN result.
func TestBadInput(t *testing.T) {
	t.Parallel()
	nan, inf := math.NaN(), math.Inf(1)
	sq := []float64{0, 0, 1, 0, 1, 1, 0, 1}
	two := []int32{1, 2, 0, 3, 0, 2}
	arrays := func(x []float64, tri []int32) func() error {
		return func() error { _, _, err := mesh.New(mesh.Arrays{X: x, Tri: tri}); return err }
	}
	good, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	s1, _ := fem.NewSpace(good, 1)
	dir := map[int32]fem.Func{mesh.SideLeft: nil}
	one := func(x, y float64) float64 { return 1 }
	assemble := func(p *fem.Problem) func() error {
		return func() error { _, err := fem.Assemble(s1, p); return err }
	}
	u, _, _ := fem.Solve(s1, &fem.Problem{F: one, Dirichlet: dir})
	eta2 := make([]float64, good.NumTriangles())
	for i := range eta2 {
		eta2[i] = float64(i + 1)
	}
	mark := func(m adapt.Marker, v []float64) func() error {
		return func() error { _, err := m.Mark(nil, v); return err }
	}
	run := func(p adapt.Problem, s adapt.Settings) func() error {
		return func() error { _, err := adapt.Run(context.Background(), p, s, adapt.Method{}); return err }
	}
	runWith := func(ctx context.Context, meth adapt.Method) func() error {
		return func() error {
			_, err := adapt.Run(ctx, adapt.Problem{Mesh: good, Degree: 1, Data: &fem.Problem{F: one, Dirichlet: dir}}, adapt.Settings{MaxSteps: 3}, meth)
			return err
		}
	}
	readJSON := func(s string) func() error {
		return func() error { _, _, err := mesh.ReadJSON(strings.NewReader(s)); return err }
	}
	// Two squares apart; only the first has a Dirichlet (tag 1) edge.
	apart, _, _ := mesh.New(mesh.Arrays{
		X:   []float64{0, 0, 1, 0, 1, 1, 0, 1, 3, 0, 4, 0, 4, 1, 3, 1},
		Tri: []int32{1, 2, 0, 3, 0, 2, 5, 6, 4, 7, 4, 6}, Bnd: []int32{0, 1}, BndTag: []int32{1},
	})
	sApart, _ := fem.NewSpace(apart, 1)
	cases := []struct {
		name string
		call func() error
		want error
	}{
		// Meshes.
		{"index out of range", arrays(sq, []int32{1, 2, 0, 3, 0, 9}), mesh.ErrIndex},
		{"repeated vertex", arrays(sq, []int32{1, 2, 0, 3, 3, 2}), mesh.ErrRepeatedVertex},
		{"zero area", arrays([]float64{0, 0, 1, 1, 2, 2}, []int32{0, 1, 2}), mesh.ErrZeroArea},
		{"NaN coordinate", arrays([]float64{0, nan, 1, 0, 1, 1, 0, 1}, two), mesh.ErrNotFinite},
		{"Inf coordinate", arrays([]float64{0, 0, inf, 0, 1, 1, 0, 1}, two), mesh.ErrNotFinite},
		{"non-manifold edge", arrays([]float64{0, 0, 1, 0, 0.5, 1, 0.5, -1, 0.5, 2}, []int32{0, 1, 2, 1, 0, 3, 0, 1, 4}), mesh.ErrNonManifold},
		{"duplicated triangle", arrays(sq, []int32{1, 2, 0, 3, 0, 2, 1, 2, 0}), mesh.ErrOverlap},
		{"empty mesh", arrays(nil, nil), mesh.ErrEmpty},
		{"mismatched lengths", arrays([]float64{0, 0, 1}, []int32{0, 1, 2}), mesh.ErrLength},
		{"generator with no cells", func() error { _, err := mesh.LShape(0); return err }, mesh.ErrArgument},
		{"coincident vertices, two meshes joined unmerged", arrays([]float64{0, 0, 1, 0, 1, 1, 0, 1, 1, 0, 2, 0, 2, 1, 1, 1}, []int32{0, 1, 2, 0, 2, 3, 4, 5, 6, 4, 6, 7}), mesh.ErrCoincident},
		{"zero mesh refined", func() error { _, _, err := (&mesh.Mesh{}).Refine(nil); return err }, mesh.ErrEmpty},
		{"zero mesh quality", func() error { _, err := (&mesh.Mesh{}).Quality(); return err }, mesh.ErrEmpty},
		{"disconnected piece without Dirichlet edge", func() error {
			_, err := fem.Assemble(sApart, &fem.Problem{F: one, Dirichlet: map[int32]fem.Func{1: nil}})
			return err
		}, fem.ErrIllPosed},
		// Problem data.
		{"negative diffusion", assemble(&fem.Problem{A: map[int32]fem.Tensor{0: fem.Scalar(-1)}, Dirichlet: dir}), fem.ErrDiffusion},
		{"zero diffusion", assemble(&fem.Problem{A: map[int32]fem.Tensor{0: fem.Scalar(0)}, Dirichlet: dir}), fem.ErrDiffusion},
		{"NaN diffusion", assemble(&fem.Problem{A: map[int32]fem.Tensor{0: fem.Scalar(nan)}, Dirichlet: dir}), fem.ErrDiffusion},
		{"NaN source met in assembly", assemble(&fem.Problem{F: func(x, y float64) float64 { return math.Log(x - 0.5) }, Dirichlet: dir}), fem.ErrNotFinite},
		{"Dirichlet tag on no edge", assemble(&fem.Problem{Dirichlet: map[int32]fem.Func{42: nil}}), fem.ErrBoundaryCondition},
		{"no Dirichlet part, no reaction", assemble(&fem.Problem{F: one}), fem.ErrIllPosed},
		{"negative reaction", assemble(&fem.Problem{C: -2, Dirichlet: dir}), fem.ErrReaction},
		{"degree 3", func() error { _, err := fem.NewSpace(good, 3); return err }, fem.ErrDegree},
		{"solver iteration limit", func() error {
			sys, _ := fem.Assemble(s1, &fem.Problem{F: one, Dirichlet: dir})
			_, _, err := sys.Solve(fem.SolveSettings{MaxIter: 1, Preconditioner: fem.Diagonal})
			return err
		}, fem.ErrNotConverged},
		{"Dirichlet and Neumann on one tag", assemble(&fem.Problem{Dirichlet: dir, Neumann: map[int32]fem.Func{mesh.SideLeft: nil}}), fem.ErrBoundaryCondition},
		{"recovery method 7", func() error {
			_, err := estimate.Recovery{Method: 7}.Estimate(nil, u, &fem.Problem{F: one, Dirichlet: dir})
			return err
		}, estimate.ErrArgument},
		// The same value as for the NaN source met in assembly above:
		// one sentinel per meaning, whichever stage met it.
		{"estimate with NaN source", func() error {
			_, err := estimate.Residual{}.Estimate(nil, u, &fem.Problem{F: func(x, y float64) float64 { return nan }, Dirichlet: dir})
			return err
		}, fem.ErrNotFinite},
		// Marking and refinement.
		{"Dörfler θ = 0", mark(adapt.Dorfler{Theta: 0}, eta2), adapt.ErrTheta},
		{"Dörfler θ > 1", mark(adapt.Dorfler{Theta: 1.5}, eta2), adapt.ErrTheta},
		{"Dörfler θ NaN", mark(adapt.Dorfler{Theta: nan}, eta2), adapt.ErrTheta},
		{"maximum θ < 0", mark(adapt.Maximum{Theta: -0.1}, eta2), adapt.ErrTheta},
		{"fraction 0", mark(adapt.Fraction{F: 0}, eta2), adapt.ErrTheta},
		{"NaN indicator", mark(adapt.Dorfler{Theta: 0.5}, []float64{1, nan, 2}), adapt.ErrIndicator},
		{"negative indicator", mark(adapt.Maximum{Theta: 0.5}, []float64{1, -1, 2}), adapt.ErrIndicator},
		{"marks of the wrong length", func() error { _, _, err := good.Refine(make([]bool, 3)); return err }, mesh.ErrLength},
		{"assessment lengths", func() error {
			_, err := estimate.Assess(&estimate.Indicators{Eta2: eta2}, eta2[:3], 0.5)
			return err
		}, estimate.ErrLength},
		// Loop settings.
		{"no stop rule", run(adapt.Problem{Mesh: good, Degree: 1, Data: &fem.Problem{Dirichlet: dir}}, adapt.Settings{}), adapt.ErrSettings},
		{"zero budget and nothing else", run(adapt.Problem{Mesh: good, Degree: 1, Data: &fem.Problem{Dirichlet: dir}}, adapt.Settings{MaxDOFs: 0}), adapt.ErrSettings},
		{"negative step limit", run(adapt.Problem{Mesh: good, Degree: 1, Data: &fem.Problem{Dirichlet: dir}}, adapt.Settings{MaxSteps: -1}), adapt.ErrSettings},
		{"zero mesh in the loop", run(adapt.Problem{Mesh: &mesh.Mesh{}, Degree: 1, Data: &fem.Problem{Dirichlet: dir}}, adapt.Settings{MaxSteps: 1}), mesh.ErrEmpty},
		{"nil context", runWith(nil, adapt.Method{}), adapt.ErrArgument}, // a nil context is the bad input under test
		{"recovery method 7 in the loop", runWith(context.Background(), adapt.Method{Estimator: estimate.Recovery{Method: 7}}), estimate.ErrArgument},
		{"estimator returns nil, nil", runWith(context.Background(), adapt.Method{Estimator: nilEstimator{}}), adapt.ErrMethod},
		{"estimator returns too few indicators", runWith(context.Background(), adapt.Method{Estimator: shortEstimator{}}), adapt.ErrMethod},
		{"solver returns too few values", runWith(context.Background(), adapt.Method{Solver: shortSolver{}}), adapt.ErrMethod},
		{"marker returns a short mask", runWith(context.Background(), adapt.Method{Marker: shortMarker{}}), adapt.ErrMethod},
		// Files.
		{"truncated JSON", readJSON(`{"vertices": [[0, 0], [1, 0]`), mesh.ErrFormat},
		{"wrong JSON type", readJSON(`{"vertices": "many", "triangles": []}`), mesh.ErrFormat},
		{"JSON lengths disagree", readJSON(`{"num_vertices": 4, "vertices": [[0,0],[1,0],[0,1]], "triangles": [[0,1,2]]}`), mesh.ErrFormat},
		{"declared size 1e12", readJSON(`{"num_vertices": 1000000000000, "vertices": [], "triangles": []}`), mesh.ErrTooLarge},
		{"malformed CSV", func() error { _, err := adapt.ReadCSV(strings.NewReader("step,dofs\n1,2\n")); return err }, adapt.ErrCSV},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			defer func() {
				if r := recover(); r != nil {
					t.Fatalf("panic: %v", r)
				}
			}()
			if err := tc.call(); !errors.Is(err, tc.want) {
				t.Fatalf("got %v, want %v", err, tc.want)
			}
		})
	}
	// An inverted (clockwise) triangle is no error: it is turned around and
	// reported.
	if _, re, err := mesh.New(mesh.Arrays{X: sq, Tri: []int32{1, 0, 2, 3, 0, 2}}); err != nil || len(re) != 1 {
		t.Errorf("inverted triangle: %v, reoriented %v", err, re)
	}
}

// Methods of a careless caller: each returns no error and a result that
// does not fit the step.
type (
	nilEstimator   struct{}
	shortEstimator struct{}
	shortSolver    struct{}
	shortMarker    struct{}
)

func (nilEstimator) Estimate(*estimate.Indicators, *fem.Function, *fem.Problem) (*estimate.Indicators, error) {
	return nil, nil
}

func (shortEstimator) Estimate(*estimate.Indicators, *fem.Function, *fem.Problem) (*estimate.Indicators, error) {
	return &estimate.Indicators{Eta2: []float64{1}}, nil
}

func (shortSolver) Solve(s *fem.Space, _ *fem.Problem, _ []float64) ([]float64, int, error) {
	return make([]float64, s.NumDOF()-1), 0, nil
}

func (shortMarker) Mark(dst []bool, eta2 []float64) ([]bool, error) {
	return make([]bool, len(eta2)/2), nil
}
