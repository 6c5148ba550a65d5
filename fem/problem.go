package fem

import (
	"fmt"
	"math"
	"slices"

	"github.com/posteriori-fem/posteriori/internal/parallel"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Tensor is a symmetric 2×2 diffusion tensor [[XX, XY], [XY, YY]].
type Tensor struct{ XX, XY, YY float64 }

// Scalar returns the isotropic tensor a·I.
func Scalar(a float64) Tensor { return Tensor{XX: a, YY: a} }

// Apply returns the product of t with the vector (gx, gy).
func (t Tensor) Apply(gx, gy float64) (float64, float64) {
	return t.XX*gx + t.XY*gy, t.XY*gx + t.YY*gy
}

// valid reports whether t is finite and positive definite.
func (t Tensor) valid() bool {
	ok := !math.IsNaN(t.XX+t.XY+t.YY) && !math.IsInf(t.XX+t.XY+t.YY, 0)
	return ok && t.XX > 0 && t.YY > 0 && t.XX*t.YY-t.XY*t.XY > 0
}

// Func is a scalar function of position.
type Func func(x, y float64) float64

// Problem is the elliptic boundary value problem
//
//	−∇·(a ∇u) + c u = f   in Ω,
//	u = g_D               on the Dirichlet edges,
//	a ∇u · n = g_N        on the Neumann edges,
//	a ∇u · n + α u = g_R  on the Robin edges,
//
// with n the outward unit normal. Boundary edges whose tag is in none of
// the three maps carry the natural condition a ∇u · n = 0. The energy norm
// of the problem is
//
//	|||v|||² = ‖a^½∇v‖² + c ‖v‖² + Σ_{Robin E} ‖α^½ v‖²_E.
type Problem struct {
	// A gives the diffusion tensor of each region. If A and AFunc are both
	// nil, a = 1 everywhere. A region that occurs in the mesh but not in A is
	// an error.
	A map[int32]Tensor
	// AFunc, if not nil, gives the diffusion at a point of a region and
	// takes precedence over A.
	AFunc func(x, y float64, region int32) Tensor
	// C is the reaction coefficient, a constant c ≥ 0.
	C float64
	// F is the source f; nil means 0.
	F Func
	// FRegion, if not nil, gives the source at a point of a region and
	// takes precedence over F: a source that differs between materials
	// needs no test of position. Every stage that reads the source
	// (assembly, estimators, goal functionals) reads it through Source.
	FRegion func(x, y float64, region int32) float64
	// Dirichlet gives g_D by boundary tag; a nil Func means 0. Where edges of
	// several Dirichlet tags meet, the smallest tag's data is used.
	Dirichlet map[int32]Func
	// Neumann gives g_N by boundary tag; a nil Func means 0.
	Neumann map[int32]Func
	// Robin gives the condition a∇u·n + α u = g_R by boundary tag (see
	// RobinData). A tag may be in only one of Dirichlet, Neumann and
	// Robin.
	Robin map[int32]RobinData
	// PureNeumann allows a problem with no Dirichlet edges, no Robin edges
	// with α > 0 and c = 0. Its
	// solution is fixed by zero mean value; the load is made compatible by
	// removing its component along the constants.
	PureNeumann bool
	// Goal, if not nil, adds the load vector of a goal functional's linear
	// part, J₀(φ_i) (Goal.Load), to the right-hand side. It is how the dual
	// problem a(v, z) = J₀(v) of goal-oriented estimation is posed as a
	// Problem, so that any solver that assembles with Assemble solves it; a
	// solver with an assembly of its own must add the vector itself. The
	// estimators of package estimate do not read it.
	Goal Goal
}

// Diffusion returns the diffusion tensor at (x, y) in the given region.
func (p *Problem) Diffusion(x, y float64, region int32) Tensor {
	switch {
	case p.AFunc != nil:
		return p.AFunc(x, y, region)
	case p.A != nil:
		return p.A[region]
	}
	return Tensor{XX: 1, YY: 1}
}

// PiecewiseConstant reports whether the diffusion is constant on each
// region (given by A, or the default a = 1).
func (p *Problem) PiecewiseConstant() bool { return p.AFunc == nil }

// Source returns the source at (x, y) in the given region: FRegion if set,
// else F, else 0.
func (p *Problem) Source(x, y float64, region int32) float64 {
	switch {
	case p.FRegion != nil:
		return p.FRegion(x, y, region)
	case p.F != nil:
		return p.F(x, y)
	}
	return 0
}

// HasSource reports whether the problem has a source (F or FRegion set).
func (p *Problem) HasSource() bool { return p.F != nil || p.FRegion != nil }

// Check verifies the problem against a mesh: the diffusion of every region
// in A is finite and positive definite, c is finite and ≥ 0, every
// Dirichlet, Neumann and Robin tag is carried by some boundary edge and no
// tag is in two of the maps, every constant Robin α is finite and ≥ 0, and
// the problem is well posed: each connected piece of the mesh has a
// Dirichlet edge or a Robin edge whose tag has α > 0 (Alpha > 0 or AlphaFunc
// set), or c > 0, unless PureNeumann. Values of F, FRegion, AFunc,
// AlphaFunc and the boundary data are checked where they are evaluated,
// during assembly (which also rejects a problem whose only Robin α is an
// AlphaFunc that vanishes on every Robin edge, when it is not otherwise
// well posed).
func (p *Problem) Check(m *mesh.Mesh) error {
	if p == nil {
		return fmt.Errorf("fem: Problem.Check: nil problem: %w", ErrArgument)
	}
	if m == nil {
		return fmt.Errorf("fem: Problem.Check: nil mesh: %w", ErrArgument)
	}
	if math.IsNaN(p.C) || math.IsInf(p.C, 0) || p.C < 0 {
		return fmt.Errorf("fem: c = %g: %w", p.C, ErrReaction)
	}
	if p.AFunc == nil && p.A != nil {
		if err := p.checkRegions(m); err != nil {
			return err
		}
	}
	tags := boundaryTags(m)
	for _, tag := range p.DirichletTags() {
		if !tags[tag] {
			return atTag(tag, fmt.Errorf("%w: a Dirichlet tag that no boundary edge carries", ErrBoundaryCondition))
		}
		if _, ok := p.Neumann[tag]; ok {
			return atTag(tag, fmt.Errorf("%w: given both as Dirichlet and as Neumann", ErrBoundaryCondition))
		}
	}
	for tag := range p.Neumann {
		if !tags[tag] {
			return atTag(tag, fmt.Errorf("%w: a Neumann tag that no boundary edge carries", ErrBoundaryCondition))
		}
	}
	for _, tag := range p.RobinTags() {
		r := p.Robin[tag]
		switch {
		case !tags[tag]:
			return atTag(tag, fmt.Errorf("%w: a Robin tag that no boundary edge carries", ErrBoundaryCondition))
		case p.isDirichlet(tag):
			return atTag(tag, fmt.Errorf("%w: given both as Dirichlet and as Robin", ErrBoundaryCondition))
		case p.Neumann != nil && hasKey(p.Neumann, tag):
			return atTag(tag, fmt.Errorf("%w: given both as Neumann and as Robin", ErrBoundaryCondition))
		case math.IsNaN(r.Alpha) || math.IsInf(r.Alpha, 0) || r.Alpha < 0:
			return atTag(tag, fmt.Errorf("%w: Robin α = %g, want a finite value ≥ 0", ErrBoundaryCondition, r.Alpha))
		}
	}
	if p.pureNeumann() && !p.PureNeumann {
		return fmt.Errorf("fem: %w (set PureNeumann to solve it up to a constant)", ErrIllPosed)
	}
	if p.C == 0 {
		return p.checkPieces(m)
	}
	return nil
}

// checkRegions verifies that every region of m has a valid tensor in A,
// each region once, in the order of the triangles. The regions met are
// remembered by their slot in the RegionTable of p, or in a map where A's
// span is too wide for a table.
func (p *Problem) checkRegions(m *mesh.Mesh) error {
	rt := NewRegionTable(p)
	seen := make([]bool, len(rt.t))
	var far map[int32]bool
	for i, r := range m.Region {
		if i > 0 && r == m.Region[i-1] { // runs of one region are common
			continue
		}
		if j, ok := rt.slot(r); ok {
			if seen[j] {
				continue
			}
			seen[j] = true
		} else if rt.t == nil {
			if far[r] {
				continue
			}
			if far == nil {
				far = map[int32]bool{}
			}
			far[r] = true
		}
		t, ok := p.A[r]
		if !ok {
			return atRegion(r, ErrRegion)
		}
		if !t.valid() {
			return atRegion(r, fmt.Errorf("%w: %+v", ErrDiffusion, t))
		}
	}
	return nil
}

// boundaryTags returns the set of tags of the boundary edges of m, from a
// parallel scan of the edges.
func boundaryTags(m *mesh.Mesh) map[int32]bool {
	ne := m.NumEdges()
	const chunk = 1 << 16
	parts := make([]map[int32]bool, (ne+chunk-1)/chunk)
	_ = parallel.For(len(parts), 1, func(lo, hi int) error {
		for c := lo; c < hi; c++ {
			part := map[int32]bool{}
			for e := c * chunk; e < min((c+1)*chunk, ne); e++ {
				if m.EdgeTri[2*e+1] < 0 {
					part[m.EdgeTag[e]] = true
				}
			}
			parts[c] = part
		}
		return nil
	})
	tags := map[int32]bool{}
	for _, part := range parts {
		for t := range part {
			tags[t] = true
		}
	}
	return tags
}

// checkPieces verifies that, without reaction, every connected piece of the
// mesh has a Dirichlet edge (else its solution is fixed only up to a
// constant), and that a pure Neumann problem has one piece (its solution is
// fixed by one mean value).
func (p *Problem) checkPieces(m *mesh.Mesh) error {
	if m.NumPieces() == 1 {
		return nil
	}
	label, n := m.Components()
	if p.pureNeumann() {
		return fmt.Errorf("fem: %w: a pure Neumann problem on a mesh of %d disconnected pieces", ErrIllPosed, n)
	}
	fixed := make([]bool, n)
	for e := range m.NumEdges() {
		if m.IsBoundary(e) && p.fixesConstant(m.EdgeTag[e]) {
			fixed[label[m.EdgeTri[2*e]]] = true
		}
	}
	for k, l := range label {
		if !fixed[l] {
			return atPiece(k, fmt.Errorf("%w: the piece of the mesh that holds this triangle (%d pieces in all) has no Dirichlet edge and no Robin edge with α > 0", ErrIllPosed, n))
		}
	}
	return nil
}

// fixesConstant reports whether an edge of the tag fixes the constant of
// a problem without reaction: a Dirichlet edge, or a Robin edge whose α
// may be positive (Alpha > 0 or AlphaFunc set).
func (p *Problem) fixesConstant(tag int32) bool {
	if p.isDirichlet(tag) {
		return true
	}
	r, ok := p.Robin[tag]
	return ok && (r.Alpha > 0 || r.AlphaFunc != nil)
}

func (p *Problem) isDirichlet(tag int32) bool {
	_, ok := p.Dirichlet[tag]
	return ok
}

func hasKey[V any](m map[int32]V, k int32) bool {
	_, ok := m[k]
	return ok
}

// DirichletTags returns the Dirichlet tags in ascending order.
func (p *Problem) DirichletTags() []int32 {
	tags := make([]int32, 0, len(p.Dirichlet))
	for t := range p.Dirichlet {
		tags = append(tags, t)
	}
	slices.Sort(tags)
	return tags
}

// RobinTags returns the Robin tags in ascending order.
func (p *Problem) RobinTags() []int32 {
	tags := make([]int32, 0, len(p.Robin))
	for t := range p.Robin {
		tags = append(tags, t)
	}
	slices.Sort(tags)
	return tags
}

// pureNeumann reports whether the solution is fixed only up to a
// constant: no Dirichlet edge, no Robin tag with α that may be positive,
// and c = 0.
func (p *Problem) pureNeumann() bool {
	if len(p.Dirichlet) > 0 || p.C != 0 {
		return false
	}
	for _, r := range p.Robin {
		if r.Alpha > 0 || r.AlphaFunc != nil {
			return false
		}
	}
	return true
}

// IsPureNeumann reports whether the solution of p is fixed only up to a
// constant (no Dirichlet edge, no Robin tag with α > 0 or an AlphaFunc,
// and c = 0): the case that Problem.PureNeumann must allow.
func (p *Problem) IsPureNeumann() bool { return p.pureNeumann() }
