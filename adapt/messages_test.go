package adapt_test

import (
	"context"
	"errors"
	"math"
	"regexp"
	"strings"
	"testing"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/estimate"
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/internal/quadrature"
	"github.com/posteriori-fem/posteriori/internal/sparse"
	"github.com/posteriori-fem/posteriori/mesh"
)

// packages are the names an error message may start a context with.
var packages = []string{"mesh", "fem", "estimate", "adapt", "sparse", "amg", "quadrature"}

// sayOnce reports what is wrong with msg under the policy of DEVELOPERS.md
// ("Rules of the house"): it starts with the package that returned it, no
// package is named twice as a context, and no context follows itself.
func sayOnce(msg, first string) string {
	if !strings.HasPrefix(msg, first+": ") {
		return "does not start with " + first + ": "
	}
	parts := strings.Split(msg, ": ")
	seen := map[string]bool{}
	for i, p := range parts {
		if i > 0 && p == parts[i-1] {
			return "repeats the context " + p
		}
		for _, pkg := range packages {
			if p == pkg {
				if seen[p] {
					return "names the package " + p + " twice"
				}
				seen[p] = true
			}
		}
	}
	return ""
}

// The errors of each package, alone and wrapped by the packages above it,
// say each context once, at every level of their chain.
func TestMessagesSayContextOnce(t *testing.T) {
	t.Parallel()
	good, _ := mesh.Rectangle(0, 0, 1, 1, 4, 4)
	dir := map[int32]fem.Func{mesh.SideLeft: nil}
	one := func(x, y float64) float64 { return 1 }
	nan := func(x, y float64) float64 { return math.NaN() }
	run := func(p *fem.Problem, meth adapt.Method) error {
		_, err := adapt.Run(context.Background(), adapt.Problem{Mesh: good, Degree: 1, Data: p}, adapt.Settings{MaxSteps: 3}, meth)
		return err
	}
	s1, _ := fem.NewSpace(good, 1)
	cases := []struct {
		name  string
		err   error
		first string
		says  string // the offending item, named in the message
	}{
		{"marker parameter in the loop", run(&fem.Problem{F: one, Dirichlet: dir}, adapt.Method{Marker: adapt.Dorfler{Theta: 2}}), "adapt", "Dorfler.Theta = 2"},
		{"estimator error in the loop", run(&fem.Problem{F: one, Dirichlet: dir}, adapt.Method{Estimator: estimate.Recovery{Method: 7}}), "adapt", "Method 7"},
		{"NaN source in the loop", run(&fem.Problem{F: nan, Dirichlet: dir}, adapt.Method{}), "adapt", "source f = NaN"},
		{"tag both Dirichlet and Neumann", run(&fem.Problem{F: one, Dirichlet: dir, Neumann: map[int32]fem.Func{mesh.SideLeft: nil}}, adapt.Method{}), "adapt", "boundary tag 4"},
		{"settings", run(&fem.Problem{F: one, Dirichlet: dir}, adapt.Method{}), "", ""}, // no error: a control
		{"estimator directly", func() error {
			u, _, _ := fem.Solve(s1, &fem.Problem{F: one, Dirichlet: dir})
			_, err := estimate.Residual{}.Estimate(nil, u, &fem.Problem{F: nan, Dirichlet: dir})
			return err
		}(), "estimate", "source f = NaN"},
		{"assembly", func() error { _, err := fem.Assemble(s1, &fem.Problem{F: nan, Dirichlet: dir}); return err }(), "fem", "source f = NaN"},
		{"generator", func() error { _, err := mesh.Rectangle(0, 0, -1, 1, 2, 2); return err }(), "mesh", "x1 > x0"},
		{"mesh file", func() error {
			_, _, err := mesh.ReadJSON(strings.NewReader(`{"vertices": [[0,0],[1,0],[1,0]], "triangles": [[0,1,2]]}`))
			return err
		}(), "mesh", "triangle 0"},
		{"vtu file", func() error {
			_, _, err := mesh.ReadVTU(strings.NewReader(`<VTKFile type="PolyData"></VTKFile>`))
			return err
		}(), "mesh", `"PolyData"`},
		{"zero mesh", func() error { _, _, err := (&mesh.Mesh{}).Refine(nil); return err }(), "mesh", "Refine"},
		{"coincident vertices", func() error {
			_, _, err := mesh.New(mesh.Arrays{X: []float64{0, 0, 1, 0, 1, 1, 0, 1, 1, 0, 2, 0, 2, 1, 1, 1}, Tri: []int32{0, 1, 2, 0, 2, 3, 4, 5, 6, 4, 6, 7}})
			return err
		}(), "mesh", "vertex 4"},
		{"domain", func() error {
			_, _, err := mesh.Triangulate(&mesh.Domain{Points: []float64{0, 0, 1, 0, 0, 1, 1, 1}, Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0}}, mesh.Options{})
			return err
		}(), "mesh", "segment 3"},
		{"domain relabel", func() error { _, _, err := (&mesh.Mesh{}).Relabel(); return err }(), "mesh", "Relabel"},
		{"solver iteration limit", func() error {
			sys, _ := fem.Assemble(s1, &fem.Problem{F: one, Dirichlet: dir})
			_, _, err := sys.Solve(fem.SolveSettings{MaxIter: 1, Preconditioner: fem.Diagonal})
			return err
		}(), "fem", "iterations"},
		{"sparse matrix", func() error { _, err := sparse.FromTriplets(2, 2, []int32{0}, []int32{5}, []float64{1}); return err }(), "sparse", "triplet 0"},
		{"quadrature", func() error { _, err := quadrature.ForTriangle(99); return err }(), "quadrature", "degree 99"},
	}
	for _, tc := range cases {
		if tc.first == "" {
			if tc.err != nil {
				t.Errorf("%s: unexpected error %v", tc.name, tc.err)
			}
			continue
		}
		if tc.err == nil {
			t.Errorf("%s: no error", tc.name)
			continue
		}
		t.Logf("%s: %v", tc.name, tc.err)
		if !strings.Contains(tc.err.Error(), tc.says) {
			t.Errorf("%s: %q does not name %q", tc.name, tc.err, tc.says)
		}
		// Every level of the chain that names a package follows the rule;
		// the levels below a package's outermost error may start with
		// another package (the one that made them) or with none (a
		// sentinel's text).
		for e := tc.err; e != nil; e = errors.Unwrap(e) {
			msg := e.Error()
			first, _, _ := strings.Cut(msg, ": ")
			if e == tc.err {
				first = tc.first
			} else if !isPackage(first) {
				continue
			}
			if why := sayOnce(msg, first); why != "" {
				t.Errorf("%s: %q %s", tc.name, msg, why)
			}
		}
	}
}

func isPackage(s string) bool {
	for _, p := range packages {
		if s == p {
			return true
		}
	}
	return false
}

// Sentinel texts carry no package prefix (DEVELOPERS.md, "Rules of the
// house"), so that one sentinel can serve several packages.
func TestSentinelsHaveNoPrefix(t *testing.T) {
	t.Parallel()
	prefix := regexp.MustCompile(`^[a-z]+: `)
	for _, err := range []error{
		mesh.ErrLength, mesh.ErrEmpty, mesh.ErrIndex, mesh.ErrRepeatedVertex, mesh.ErrNotFinite, mesh.ErrZeroArea,
		mesh.ErrNonManifold, mesh.ErrOverlap, mesh.ErrNotAnEdge, mesh.ErrNotBoundary, mesh.ErrDuplicateEdge, mesh.ErrNegativeTag,
		mesh.ErrUnusedVertex, mesh.ErrCoincident, mesh.ErrArgument, mesh.ErrFormat, mesh.ErrTooLarge,
		mesh.ErrZeroLength, mesh.ErrUnclosed, mesh.ErrIntersect, mesh.ErrOutside, mesh.ErrSeedConflict, mesh.ErrVertexLimit, mesh.ErrOffCurve, mesh.ErrCurve,
		fem.ErrArgument, fem.ErrDegree, fem.ErrDiffusion, fem.ErrReaction, fem.ErrNotFinite, fem.ErrIllPosed, fem.ErrBoundaryCondition,
		fem.ErrRegion, fem.ErrNotConverged, fem.ErrOutside,
		estimate.ErrArgument, estimate.ErrNotFinite, estimate.ErrLength, estimate.ErrTooFew,
		adapt.ErrTheta, adapt.ErrIndicator, adapt.ErrTooMany, adapt.ErrSettings, adapt.ErrArgument, adapt.ErrMethod, adapt.ErrCSV, fem.ErrGoal,
		sparse.ErrDims, sparse.ErrIndex, sparse.ErrNotFinite, sparse.ErrNotPositive, sparse.ErrStructure, sparse.ErrSettings,
		sparse.ErrNotConverged, sparse.ErrBreakdown, quadrature.ErrDegree,
	} {
		if prefix.MatchString(err.Error()) {
			t.Errorf("sentinel %q carries a prefix", err)
		}
	}
}

// One sentinel per meaning (DEVELOPERS.md, "Rules of the house"): the
// values that several packages export are one value, as os.ErrNotExist is
// fs.ErrNotExist, and the two boundary-tag reasons of mesh and fem, which
// mean different things, are two.
func TestSharedSentinels(t *testing.T) {
	t.Parallel()
	for _, tc := range []struct {
		name string
		errs []error
	}{
		{"not finite", []error{mesh.ErrNotFinite, fem.ErrNotFinite, estimate.ErrNotFinite, sparse.ErrNotFinite}},
		{"argument", []error{mesh.ErrArgument, fem.ErrArgument, estimate.ErrArgument, adapt.ErrArgument}},
		{"length", []error{mesh.ErrLength, estimate.ErrLength}},
		{"not converged", []error{fem.ErrNotConverged, sparse.ErrNotConverged}},
		{"goal", []error{fem.ErrGoal, estimate.ErrGoal, adapt.ErrGoal}},
	} {
		for i, err := range tc.errs[1:] {
			if err != tc.errs[0] {
				t.Errorf("%s: value %d (%q) is not value 0 (%q)", tc.name, i+1, err, tc.errs[0])
			}
		}
	}
	if errors.Is(mesh.ErrNegativeTag, fem.ErrBoundaryCondition) || errors.Is(fem.ErrBoundaryCondition, mesh.ErrNegativeTag) {
		t.Error("mesh.ErrNegativeTag and fem.ErrBoundaryCondition match each other")
	}
}
