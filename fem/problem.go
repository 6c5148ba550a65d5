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
//
// with n the outward unit normal. Boundary edges whose tag is in neither map
// carry the natural condition a ∇u · n = 0.
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
	// Dirichlet gives g_D by boundary tag; a nil Func means 0. Where edges of
	// several Dirichlet tags meet, the smallest tag's data is used.
	Dirichlet map[int32]Func
	// Neumann gives g_N by boundary tag; a nil Func means 0.
	Neumann map[int32]Func
	// PureNeumann allows a problem with no Dirichlet edges and c = 0. Its
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

// Source returns f(x, y), or 0 where F is nil.
func (p *Problem) Source(x, y float64) float64 {
	if p.F == nil {
		return 0
	}
	return p.F(x, y)
}

// Check verifies the problem against a mesh: the diffusion of every region
// in A is finite and positive definite, c is finite and ≥ 0, every Dirichlet
// and Neumann tag is carried by some boundary edge and no tag is in both,
// and the problem is well posed (a Dirichlet edge or c > 0, unless
// PureNeumann). Values of F, AFunc and the boundary data are checked where
// they are evaluated, during assembly.
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
	if len(p.Dirichlet) == 0 && p.C == 0 && !p.PureNeumann {
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
	if len(p.Dirichlet) == 0 {
		return fmt.Errorf("fem: %w: a pure Neumann problem on a mesh of %d disconnected pieces", ErrIllPosed, n)
	}
	fixed := make([]bool, n)
	for e := range m.NumEdges() {
		if _, ok := p.Dirichlet[m.EdgeTag[e]]; ok && m.IsBoundary(e) {
			fixed[label[m.EdgeTri[2*e]]] = true
		}
	}
	for k, l := range label {
		if !fixed[l] {
			return atPiece(k, fmt.Errorf("%w: the piece of the mesh that holds this triangle (%d pieces in all) has no Dirichlet edge", ErrIllPosed, n))
		}
	}
	return nil
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

// pureNeumann reports whether the solution is fixed only up to a constant.
func (p *Problem) pureNeumann() bool { return len(p.Dirichlet) == 0 && p.C == 0 }
