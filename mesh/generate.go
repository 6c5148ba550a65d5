package mesh

import (
	"fmt"
	"math"
)

// Boundary tags of the sides of Rectangle and Quadrants.
const (
	SideBottom int32 = 1 // y = y0
	SideRight  int32 = 2 // x = x1
	SideTop    int32 = 3 // y = y1
	SideLeft   int32 = 4 // x = x0
)

// Boundary tags of the slit square's crack faces (its outer sides carry
// SideBottom, SideRight, SideTop and SideLeft).
const (
	SlitUpper int32 = 5 // the face y = 0+, seen from the upper half
	SlitLower int32 = 6 // the face y = 0-, seen from the lower half
)

// Rectangle returns a uniform mesh of [x0, x1] × [y0, y1] with nx × ny
// cells, each cut along the diagonal from its lower-left to its upper-right
// corner into two right triangles. The right-angle vertex of each triangle
// is its newest vertex, so the refinement edge is the hypotenuse, shared by
// the two triangles of the cell. The sides carry the tags SideBottom,
// SideRight, SideTop and SideLeft; every triangle has region 0.
func Rectangle(x0, y0, x1, y1 float64, nx, ny int) (*Mesh, error) {
	for _, v := range []float64{x0, y0, x1, y1} {
		if math.IsNaN(v) || math.IsInf(v, 0) {
			return nil, fmt.Errorf("mesh: Rectangle: corner coordinates must be finite: %w", ErrArgument)
		}
	}
	if !(x1 > x0 && y1 > y0) {
		return nil, fmt.Errorf("mesh: Rectangle: need x1 > x0 and y1 > y0: %w", ErrArgument)
	}
	hx, hy := (x1-x0)/float64(max(nx, 1)), (y1-y0)/float64(max(ny, 1))
	g := grid{x0: x0, y0: y0, hx: hx, hy: hy, nx: nx, ny: ny}
	return g.build("Rectangle", func(mx, my, cx, cy float64) int32 {
		return sideTag(mx, my, x0, y0, x1, y1)
	})
}

// LShape returns a uniform mesh of the L-shaped domain (-1,1)² minus
// [0,1)×(-1,0], with n cells per unit length (3n² cells, 6n² triangles)
// cut as in Rectangle. The re-entrant corner is the origin. The six sides
// are tagged 1 to 6 counter-clockwise from (-1,-1): 1 is y = -1, 2 is
// x = 0 (y < 0), 3 is y = 0 (x > 0), 4 is x = 1, 5 is y = 1, 6 is x = -1.
func LShape(n int) (*Mesh, error) {
	g := grid{x0: -1, y0: -1, hx: 1 / float64(max(n, 1)), hy: 1 / float64(max(n, 1)), nx: 2 * n, ny: 2 * n}
	g.keep = func(i, j int) bool { return i < n || j >= n }
	return g.build("LShape", func(mx, my, cx, cy float64) int32 {
		switch {
		case near(my, -1):
			return 1
		case near(mx, 0) && my < 0:
			return 2
		case near(my, 0) && mx > 0:
			return 3
		case near(mx, 1):
			return 4
		case near(my, 1):
			return 5
		}
		return 6
	})
}

// Slit returns a uniform mesh of the slit square (-1,1)² cut along
// [0,1)×{0}, with n cells per unit length (4n² cells) cut as in Rectangle.
// The vertices on the slit with x > 0 are doubled, so that the crack faces
// are separate boundary edges: SlitUpper for the face of the upper half,
// SlitLower for the lower. The tip is the origin; the outer sides carry
// SideBottom, SideRight, SideTop and SideLeft.
func Slit(n int) (*Mesh, error) {
	g := grid{x0: -1, y0: -1, hx: 1 / float64(max(n, 1)), hy: 1 / float64(max(n, 1)), nx: 2 * n, ny: 2 * n, slit: true}
	return g.build("Slit", func(mx, my, cx, cy float64) int32 {
		if near(my, 0) {
			if cy > 0 {
				return SlitUpper
			}
			return SlitLower
		}
		return sideTag(mx, my, -1, -1, 1, 1)
	})
}

// Quadrants returns a uniform mesh of (-1,1)² with n cells per unit length
// (4n² cells) cut as in Rectangle, whose triangles carry the number of their
// quadrant as region: 1 for x > 0, y > 0, then 2, 3 and 4 counter-clockwise.
// The sides carry SideBottom, SideRight, SideTop and SideLeft.
func Quadrants(n int) (*Mesh, error) {
	g := grid{x0: -1, y0: -1, hx: 1 / float64(max(n, 1)), hy: 1 / float64(max(n, 1)), nx: 2 * n, ny: 2 * n}
	g.region = func(i, j int) int32 {
		right, up := i >= n, j >= n
		switch {
		case right && up:
			return 1
		case up:
			return 2
		case !right:
			return 3
		}
		return 4
	}
	return g.build("Quadrants", func(mx, my, cx, cy float64) int32 {
		return sideTag(mx, my, -1, -1, 1, 1)
	})
}

func near(a, b float64) bool { return math.Abs(a-b) < 1e-9 }

func sideTag(mx, my, x0, y0, x1, y1 float64) int32 {
	tol := 1e-9 * max(x1-x0, y1-y0)
	switch {
	case math.Abs(my-y0) < tol:
		return SideBottom
	case math.Abs(mx-x1) < tol:
		return SideRight
	case math.Abs(my-y1) < tol:
		return SideTop
	}
	return SideLeft
}

// grid describes a structured mesh of nx × ny cells of size hx × hy with
// lower-left corner (x0, y0). keep selects cells (nil keeps all); region
// gives a cell's region (nil: 0); slit doubles the vertices of the middle
// row right of the middle column, so that cells below use their own copies.
type grid struct {
	x0, y0, hx, hy float64
	nx, ny         int
	keep           func(i, j int) bool
	region         func(i, j int) int32
	slit           bool
}

func (g *grid) build(name string, tag func(mx, my, cx, cy float64) int32) (*Mesh, error) {
	if g.nx < 1 || g.ny < 1 {
		return nil, fmt.Errorf("mesh: %s: need at least one cell in each direction: %w", name, ErrArgument)
	}
	if float64(g.nx+1)*float64(g.ny+2) > math.MaxInt32/8 {
		return nil, fmt.Errorf("mesh: %s: %d × %d cells is too many for int32 indices: %w", name, g.nx, g.ny, ErrArgument)
	}
	nx, ny := g.nx, g.ny
	// Vertex slots: (nx+1)(ny+1) grid points, then one extra row for the
	// lower copies of slit vertices.
	slot := func(i, j int, below bool) int {
		if g.slit && below && j == ny/2 && i > nx/2 {
			return (ny+1)*(nx+1) + i
		}
		return j*(nx+1) + i
	}
	id := make([]int32, (ny+2)*(nx+1))
	for i := range id {
		id[i] = -1
	}
	var cells [][2]int
	for j := range ny {
		for i := range nx {
			if g.keep == nil || g.keep(i, j) {
				cells = append(cells, [2]int{i, j})
			}
		}
	}
	corners := func(i, j int) [4]int { // lower-left, lower-right, upper-right, upper-left
		below := j == ny/2-1
		return [4]int{slot(i, j, false), slot(i+1, j, false), slot(i+1, j+1, below), slot(i, j+1, below)}
	}
	for _, c := range cells {
		for _, s := range corners(c[0], c[1]) {
			id[s] = 0
		}
	}
	var x []float64
	nv := int32(0)
	for s := range id {
		if id[s] < 0 {
			continue
		}
		id[s] = nv
		nv++
		i, j := s%(nx+1), s/(nx+1)
		if j == ny+1 { // lower copy of a slit vertex
			j = ny / 2
		}
		x = append(x, g.x0+float64(i)*g.hx, g.y0+float64(j)*g.hy)
	}
	tri := make([]int32, 0, 6*len(cells))
	region := make([]int32, 0, 2*len(cells))
	for _, c := range cells {
		q := corners(c[0], c[1])
		a, b, cc, d := id[q[0]], id[q[1]], id[q[2]], id[q[3]]
		tri = append(tri, b, cc, a, d, a, cc)
		r := int32(0)
		if g.region != nil {
			r = g.region(c[0], c[1])
		}
		region = append(region, r, r)
	}
	// The faces of the slit are declared, as New requires of the doubled
	// vertices; their tags are set below with the others.
	var bnd, bndTag []int32
	if g.slit {
		for i := nx / 2; i < nx; i++ {
			bnd = append(bnd, id[slot(i, ny/2, false)], id[slot(i+1, ny/2, false)],
				id[slot(i, ny/2, true)], id[slot(i+1, ny/2, true)])
			bndTag = append(bndTag, 0, 0)
		}
	}
	m, _, err := New(Arrays{X: x, Tri: tri, Region: region, Bnd: bnd, BndTag: bndTag})
	if err != nil {
		return nil, within(name, err)
	}
	for e := range m.NumEdges() {
		if !m.IsBoundary(e) {
			continue
		}
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		k := m.EdgeTri[2*e]
		t := m.Tri[3*k : 3*k+3]
		cx := (m.X[2*t[0]] + m.X[2*t[1]] + m.X[2*t[2]]) / 3
		cy := (m.X[2*t[0]+1] + m.X[2*t[1]+1] + m.X[2*t[2]+1]) / 3
		m.EdgeTag[e] = tag((m.X[2*a]+m.X[2*b])/2, (m.X[2*a+1]+m.X[2*b+1])/2, cx, cy)
	}
	return m, nil
}
