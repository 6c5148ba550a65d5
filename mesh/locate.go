package mesh

import "math"

// Locator finds the triangle that contains a point. It buckets the
// triangles' bounding boxes in a uniform grid of about one cell per
// triangle; building it is linear in the size of the mesh, and a query
// costs time proportional to the number of triangles whose boxes overlap
// the query's cell (a few, on a mesh of bounded grading).
type Locator struct {
	m          *Mesh
	x0, y0     float64
	dx, dy     float64
	nx, ny     int
	start, tri []int32
}

// NewLocator returns a Locator for m.
func NewLocator(m *Mesh) *Locator {
	nt := m.NumTriangles()
	l := &Locator{m: m, x0: math.Inf(1), y0: math.Inf(1)}
	x1, y1 := math.Inf(-1), math.Inf(-1)
	for i := range m.NumVertices() {
		x, y := m.Vertex(i)
		l.x0, l.y0 = min(l.x0, x), min(l.y0, y)
		x1, y1 = max(x1, x), max(y1, y)
	}
	w, h := x1-l.x0, y1-l.y0
	n := max(1, int(math.Sqrt(float64(nt))))
	l.nx = max(1, min(4*n, int(float64(n)*math.Sqrt(w/h))))
	l.ny = max(1, min(4*n, nt/l.nx))
	l.dx, l.dy = w/float64(l.nx), h/float64(l.ny)
	l.start = make([]int32, l.nx*l.ny+1)
	for pass := range 2 {
		for k := range nt {
			i0, j0, i1, j1 := l.box(k)
			for j := j0; j <= j1; j++ {
				for i := i0; i <= i1; i++ {
					c := j*l.nx + i
					if pass == 0 {
						l.start[c+1]++
					} else {
						l.tri[l.start[c]] = int32(k)
						l.start[c]++
					}
				}
			}
		}
		if pass == 0 {
			for c := range l.nx * l.ny {
				l.start[c+1] += l.start[c]
			}
			l.tri = make([]int32, l.start[l.nx*l.ny])
		} else {
			// Filling advanced each start to the next cell's; shift back.
			copy(l.start[1:], l.start[:l.nx*l.ny])
			l.start[0] = 0
		}
	}
	return l
}

func (l *Locator) cell(x, y float64) (int, int) {
	i := int(math.Floor((x - l.x0) / l.dx))
	j := int(math.Floor((y - l.y0) / l.dy))
	return min(max(i, 0), l.nx-1), min(max(j, 0), l.ny-1)
}

func (l *Locator) box(k int) (i0, j0, i1, j1 int) {
	t := l.m.Tri[3*k : 3*k+3]
	xa, ya := l.m.Vertex(int(t[0]))
	xb, yb := l.m.Vertex(int(t[1]))
	xc, yc := l.m.Vertex(int(t[2]))
	i0, j0 = l.cell(min(xa, xb, xc), min(ya, yb, yc))
	i1, j1 = l.cell(max(xa, xb, xc), max(ya, yb, yc))
	return
}

// Locate returns a triangle containing (x, y) and the point's barycentric
// coordinates in it, and reports whether one was found. Points on an edge
// or within a relative distance of about 1e-12 of the mesh count as inside.
func (l *Locator) Locate(x, y float64) (k int, bary [3]float64, ok bool) {
	if math.IsNaN(x) || math.IsNaN(y) {
		return -1, bary, false
	}
	i, j := l.cell(x, y)
	c := j*l.nx + i
	best, bestMin := -1, math.Inf(-1)
	for _, t := range l.tri[l.start[c]:l.start[c+1]] {
		b := l.m.Barycentric(int(t), x, y)
		if lo := min(b[0], b[1], b[2]); lo > bestMin {
			best, bestMin, bary = int(t), lo, b
		}
	}
	if best < 0 || bestMin < -1e-12 {
		return -1, [3]float64{}, false
	}
	return best, bary, true
}

// Barycentric returns the barycentric coordinates of (x, y) with respect to
// triangle k.
func (m *Mesh) Barycentric(k int, x, y float64) [3]float64 {
	t := m.Tri[3*k : 3*k+3]
	xa, ya := m.Vertex(int(t[0]))
	xb, yb := m.Vertex(int(t[1]))
	xc, yc := m.Vertex(int(t[2]))
	d := (xb-xa)*(yc-ya) - (yb-ya)*(xc-xa)
	l1 := ((x-xa)*(yc-ya) - (y-ya)*(xc-xa)) / d
	l2 := ((xb-xa)*(y-ya) - (yb-ya)*(x-xa)) / d
	return [3]float64{1 - l1 - l2, l1, l2}
}
