package amg

import "github.com/posteriori-fem/posteriori/internal/sparse"

// Hooks for the tests of package amg_test, which assemble their matrices
// with package fem; fem imports amg, so those tests cannot be in package
// amg itself.

// RandomVector and Dot are the test helpers of parts_test.go.
var (
	RandomVector = randomVector
	Dot          = dot
)

// Isolated is the aggregate label of a decoupled node.
const Isolated = isolated

// ParallelRows is the row count above which V-cycle steps run in parallel.
const ParallelRows = parallelRows

// ColourRows is the row count above which a level is smoothed by
// multicolour Gauss–Seidel.
const ColourRows = colourRows

// LevelMatrix returns the matrix of level l.
func LevelMatrix(h *Hierarchy, l int) *sparse.CSR { return h.levels[l].a }

// Prolongator returns the prolongator from level l+1 to level l.
func Prolongator(h *Hierarchy, l int) *sparse.CSR { return h.levels[l].p }

// LevelSolved reports whether level l is solved by the dense
// factorisation.
func LevelSolved(h *Hierarchy, l int) bool { return h.levels[l].chol != nil }

// DroppedPivots returns the number of zero pivots dropped by the dense
// factorisation of the coarsest level.
func DroppedPivots(h *Hierarchy) int {
	c := h.levels[len(h.levels)-1].chol
	if c == nil {
		return 0
	}
	n := 0
	for _, z := range c.null {
		if z {
			n++
		}
	}
	return n
}

// Aggregates returns the aggregation of a with strength threshold theta.
func Aggregates(a *sparse.CSR, theta float64) ([]int32, int) {
	var c connections
	strength(&c, a, a.Diagonal(nil), theta)
	return aggregate(a, c.strong, new(workspace))
}

// SmoothedProlongator returns the smoothed prolongator of a for strength
// threshold theta.
func SmoothedProlongator(a *sparse.CSR, theta float64) (*sparse.CSR, error) {
	diag := a.Diagonal(nil)
	inv := make([]float64, len(diag))
	for i, d := range diag {
		inv[i] = 1 / d
	}
	var c connections
	strength(&c, a, diag, theta)
	agg, nagg := aggregate(a, c.strong, new(workspace))
	p, err := prolongator(nil, a, diag, &c, agg, nagg, filteredRho(nil, a, diag, inv, &c))
	return p, err
}
