package mesh

// cdt is the working triangulation of Triangulate: a triangle-neighbour
// structure with a constraint mark per triangle side.
//
// Triangle t has the counter-clockwise vertices tri[3t..3t+2]; side i of t
// is the edge opposite its vertex i, nbr[3t+i] is the triangle across it
// (-1 where there is none) and seg[3t+i] the input segment it lies on (-1
// for an unconstrained side). Vertices 0, 1, 2 are the corners of a large
// enclosing triangle, which makes every input point an interior vertex
// while the points and segments are inserted; the triangles outside the
// domain are removed afterwards (state).
type cdt struct {
	x     []float64
	tri   []int32
	nbr   []int32
	seg   []int32
	vt    []int32 // a triangle at each vertex
	state []int8  // per triangle: live, exterior or hole
	reg   []int32 // per triangle: the region tag
	last  int32   // where the next walk starts
	rng   uint64  // state of the walk's random choices (fixed seed)
	stack []int32 // scratch for legalize
}

const (
	live     int8 = 0
	exterior int8 = 1
	hole     int8 = 2
)

func next3(i int) int { return (i + 1) % 3 }
func prev3(i int) int { return (i + 2) % 3 }

// newCDT returns the triangulation of the enclosing triangle of the box
// [x0, x1] × [y0, y1].
func newCDT(x0, y0, x1, y1 float64, capacity int) *cdt {
	c := &cdt{rng: 0x9e3779b97f4a7c15}
	c.x = make([]float64, 0, 2*capacity)
	c.tri = make([]int32, 0, 6*capacity)
	c.nbr = make([]int32, 0, 6*capacity)
	c.seg = make([]int32, 0, 6*capacity)
	c.state = make([]int8, 0, 2*capacity)
	c.vt = make([]int32, 0, capacity)
	cx, cy := (x0+x1)/2, (y0+y1)/2
	r := max(x1-x0, y1-y0, 1e-300)
	// A triangle far larger than the box; the predicates are exact, so
	// its size only has to keep it clear of the box.
	const s = 64
	c.addVertex(cx-3*s*r, cy-2*s*r)
	c.addVertex(cx+3*s*r, cy-2*s*r)
	c.addVertex(cx, cy+3*s*r)
	c.newTri(0, 1, 2)
	return c
}

func (c *cdt) addVertex(x, y float64) int32 {
	c.x = append(c.x, x, y)
	c.vt = append(c.vt, -1)
	return int32(len(c.vt) - 1)
}

func (c *cdt) newTri(a, b, d int32) int32 {
	t := int32(len(c.tri) / 3)
	c.tri = append(c.tri, a, b, d)
	c.nbr = append(c.nbr, -1, -1, -1)
	c.seg = append(c.seg, -1, -1, -1)
	c.state = append(c.state, live)
	c.reg = append(c.reg, 0)
	c.vt[a], c.vt[b], c.vt[d] = t, t, t
	return t
}

// set writes the vertices of t and records t at each of them.
func (c *cdt) set(t int32, a, b, d int32) {
	c.tri[3*t], c.tri[3*t+1], c.tri[3*t+2] = a, b, d
	c.vt[a], c.vt[b], c.vt[d] = t, t, t
}

// side returns the side of u that faces t.
func (c *cdt) side(u, t int32) int {
	for j := range 3 {
		if c.nbr[3*u+int32(j)] == t {
			return j
		}
	}
	panic("mesh: cdt: neighbour relation is not symmetric")
}

// link makes t's side i and u's side j face each other (u may be -1) and
// gives them the segment s.
func (c *cdt) link(t int32, i int, u int32, s int32) {
	c.nbr[3*t+int32(i)] = u
	c.seg[3*t+int32(i)] = s
}

// relink replaces old by t as the neighbour of u (u may be -1).
func (c *cdt) relink(u, old, t int32) {
	if u >= 0 {
		c.nbr[3*u+int32(c.side(u, old))] = t
	}
}

func (c *cdt) rand3() int {
	c.rng ^= c.rng << 13
	c.rng ^= c.rng >> 7
	c.rng ^= c.rng << 17
	return int(c.rng % 3)
}

// Location of a point in a triangle.
const (
	inside = iota
	onEdge
	onVertex
	outside
)

// locate finds a triangle containing (px, py), walking from c.last
// (a remembering stochastic walk: Devillers, Pion and Teillaud, Walking in
// a triangulation, Int. J. Found. Comput. Sci. 13 (2002) 181–199). It
// reports whether the point is inside the triangle, on its side i, or on
// its vertex i. The walk crosses only live triangles; outside is returned
// when the point is beyond the live triangles.
func (c *cdt) locate(px, py float64) (t int32, where, i int) {
	t = c.last
	if t < 0 || int(t) >= len(c.state) || c.state[t] != live {
		t = c.anyLive()
	}
	prev := int32(-1)
	limit := 4*len(c.state) + 64
	for step := 0; step < limit; step++ {
		r := c.rand3()
		moved := false
		for k := range 3 {
			j := (r + k) % 3
			a, b := c.tri[3*t+int32(next3(j))], c.tri[3*t+int32(prev3(j))]
			u := c.nbr[3*t+int32(j)]
			if u == prev && u >= 0 {
				continue
			}
			if orientXY(c.x[2*a], c.x[2*a+1], c.x[2*b], c.x[2*b+1], px, py) < 0 {
				if u < 0 || c.state[u] != live {
					return t, outside, j
				}
				prev, t = t, u
				moved = true
				break
			}
		}
		if !moved {
			c.last = t
			w, k := c.classify(t, px, py)
			return t, w, k
		}
	}
	// The walk terminates with probability one; a scan backs it up.
	for u := range int32(len(c.state)) {
		if c.state[u] != live {
			continue
		}
		if w, k := c.classify(u, px, py); w != outside {
			c.last = u
			return u, w, k
		}
	}
	return -1, outside, 0
}

func (c *cdt) anyLive() int32 {
	for u := len(c.state) - 1; u >= 0; u-- {
		if c.state[u] == live {
			return int32(u)
		}
	}
	return -1
}

// classify places (px, py) with respect to triangle t.
func (c *cdt) classify(t int32, px, py float64) (where, i int) {
	var o [3]int
	zeros := 0
	for j := range 3 {
		a, b := c.tri[3*t+int32(next3(j))], c.tri[3*t+int32(prev3(j))]
		o[j] = orientXY(c.x[2*a], c.x[2*a+1], c.x[2*b], c.x[2*b+1], px, py)
		if o[j] < 0 {
			return outside, j
		}
		if o[j] == 0 {
			zeros++
		}
	}
	switch zeros {
	case 0:
		return inside, 0
	case 1:
		for j := range 3 {
			if o[j] == 0 {
				return onEdge, j
			}
		}
	}
	for j := range 3 {
		if o[j] != 0 {
			return onVertex, j
		}
	}
	return onVertex, 0
}

// insertIn splits triangle t into three at the new vertex p and restores
// the Delaunay property by flips across unconstrained sides.
func (c *cdt) insertIn(t int32, p int32) {
	a, b, d := c.tri[3*t], c.tri[3*t+1], c.tri[3*t+2]
	na, nb, nd := c.nbr[3*t], c.nbr[3*t+1], c.nbr[3*t+2]
	sa, sb, sd := c.seg[3*t], c.seg[3*t+1], c.seg[3*t+2]
	t1 := c.newTri(p, d, a)
	t2 := c.newTri(p, a, b)
	c.reg[t1], c.reg[t2] = c.reg[t], c.reg[t]
	c.set(t, p, b, d)
	c.link(t, 0, na, sa)
	c.link(t, 1, t1, -1)
	c.link(t, 2, t2, -1)
	c.link(t1, 0, nb, sb)
	c.link(t1, 1, t2, -1)
	c.link(t1, 2, t, -1)
	c.link(t2, 0, nd, sd)
	c.link(t2, 1, t, -1)
	c.link(t2, 2, t1, -1)
	c.relink(nb, t, t1)
	c.relink(nd, t, t2)
	c.legalize(t, t1, t2)
}

// insertOn splits side i of triangle t, and the triangle across it, at the
// new vertex p, which lies on that side. A constrained side stays
// constrained in its two halves.
func (c *cdt) insertOn(t int32, i int, p int32) {
	a := c.tri[3*t+int32(i)]
	b := c.tri[3*t+int32(next3(i))]
	d := c.tri[3*t+int32(prev3(i))]
	u := c.nbr[3*t+int32(i)]
	s := c.seg[3*t+int32(i)]
	nb, nd := c.nbr[3*t+int32(next3(i))], c.nbr[3*t+int32(prev3(i))]
	sb, sd := c.seg[3*t+int32(next3(i))], c.seg[3*t+int32(prev3(i))]
	// t = (a, b, d) with side i = b–d; t becomes (p, a, b), t2 = (p, d, a).
	t2 := c.newTri(p, d, a)
	c.reg[t2] = c.reg[t]
	c.set(t, p, a, b)
	c.link(t, 0, nd, sd)
	c.link(t2, 0, nb, sb)
	c.link(t, 2, t2, -1)
	c.link(t2, 1, t, -1)
	c.relink(nb, t, t2)
	if u < 0 {
		c.link(t, 1, -1, s)
		c.link(t2, 2, -1, s)
		c.legalize(t, t2)
		return
	}
	j := c.side(u, t)
	e := c.tri[3*u+int32(j)]
	// u = (e, d, b) with side j = d–b; u becomes (p, b, e), u2 = (p, e, d).
	mb, md := c.nbr[3*u+int32(next3(j))], c.nbr[3*u+int32(prev3(j))] // across b–e, e–d
	smb, smd := c.seg[3*u+int32(next3(j))], c.seg[3*u+int32(prev3(j))]
	u2 := c.newTri(p, e, d)
	c.reg[u2] = c.reg[u]
	c.set(u, p, b, e)
	c.link(u, 0, mb, smb)
	c.link(u2, 0, md, smd)
	c.link(u, 1, u2, -1)
	c.link(u2, 2, u, -1)
	c.relink(md, u, u2)
	// The halves of b–d: p–b between t and u, d–p between t2 and u2.
	c.link(t, 1, u, s)
	c.link(u, 2, t, s)
	c.link(t2, 2, u2, s)
	c.link(u2, 1, t2, s)
	c.legalize(t, t2, u, u2)
}

// flip replaces the side i of t, shared with u, by the other diagonal of
// their quadrilateral. With t = (a, b, d) (a at i) and u across b–d with
// apex e, the results are t = (a, b, e) and u = (a, e, d).
func (c *cdt) flip(t int32, i int) (int32, int32) {
	u := c.nbr[3*t+int32(i)]
	j := c.side(u, t)
	a := c.tri[3*t+int32(i)]
	b := c.tri[3*t+int32(next3(i))]
	d := c.tri[3*t+int32(prev3(i))]
	e := c.tri[3*u+int32(j)]
	nA, sA := c.nbr[3*t+int32(next3(i))], c.seg[3*t+int32(next3(i))] // across d–a
	nB, sB := c.nbr[3*t+int32(prev3(i))], c.seg[3*t+int32(prev3(i))] // across a–b
	// u = (e, d, b): side next3(j) is b–e, side prev3(j) is e–d.
	nC, sC := c.nbr[3*u+int32(next3(j))], c.seg[3*u+int32(next3(j))]
	nD, sD := c.nbr[3*u+int32(prev3(j))], c.seg[3*u+int32(prev3(j))]
	c.set(t, a, b, e)
	c.set(u, a, e, d)
	c.link(t, 0, nC, sC)
	c.link(t, 1, u, -1)
	c.link(t, 2, nB, sB)
	c.link(u, 0, nD, sD)
	c.link(u, 1, nA, sA)
	c.link(u, 2, t, -1)
	c.relink(nC, u, t)
	c.relink(nA, t, u)
	return t, u
}

// legalize flips, until none is left, the unconstrained sides opposite
// vertex 0 of the given triangles (the new vertex) that fail the
// in-circle test, following Lawson's incremental algorithm.
func (c *cdt) legalize(ts ...int32) {
	c.stack = append(c.stack[:0], ts...)
	for len(c.stack) > 0 {
		t := c.stack[len(c.stack)-1]
		c.stack = c.stack[:len(c.stack)-1]
		u := c.nbr[3*t]
		if u < 0 || c.seg[3*t] >= 0 || c.state[u] != live {
			continue
		}
		e := c.tri[3*u+int32(c.side(u, t))]
		if incircle(c.x, c.tri[3*t], c.tri[3*t+1], c.tri[3*t+2], e) > 0 {
			t, u = c.flip(t, 0)
			c.stack = append(c.stack, t, u)
		}
	}
}

// insert adds the point (px, py) as a new vertex. It returns the new
// vertex, or the existing vertex at that place with dup set, or -1 when
// the point lies outside the live triangles.
func (c *cdt) insert(px, py float64) (v int32, dup bool) {
	t, where, i := c.locate(px, py)
	switch where {
	case outside:
		return -1, false
	case onVertex:
		return c.tri[3*t+int32(i)], true
	}
	v = c.addVertex(px, py)
	if where == inside {
		c.insertIn(t, v)
	} else {
		c.insertOn(t, i, v)
	}
	c.last = c.vt[v]
	return v, false
}

// around calls f for the triangles around vertex v, counter-clockwise
// from vt[v], with the local index of v in each, until f returns false or
// the turn is complete or meets a side without a neighbour, in which case
// it turns the other way from vt[v] too.
func (c *cdt) around(v int32, f func(t int32, i int) bool) {
	t0 := c.vt[v]
	t := t0
	for {
		i := c.local(t, v)
		if !f(t, i) {
			return
		}
		// The next triangle counter-clockwise shares the side v–tri[i+2],
		// which is side next3(i).
		u := c.nbr[3*t+int32(next3(i))]
		if u == t0 {
			return
		}
		if u < 0 || c.state[u] != c.state[t0] {
			break
		}
		t = u
	}
	t = t0
	for {
		i := c.local(t, v)
		u := c.nbr[3*t+int32(prev3(i))]
		if u < 0 || u == t0 || c.state[u] != c.state[t0] {
			return
		}
		t = u
		if !f(t, c.local(t, v)) {
			return
		}
	}
}

func (c *cdt) local(t, v int32) int {
	switch v {
	case c.tri[3*t]:
		return 0
	case c.tri[3*t+1]:
		return 1
	case c.tri[3*t+2]:
		return 2
	}
	panic("mesh: cdt: vertex not in its triangle")
}

// findSide returns a triangle with the edge a–b and the side of it that
// the edge is, or -1. It turns around a, then around b; where the domain
// touches itself at both (their triangles form several fans, which around
// cannot pass between), it scans the live triangles.
func (c *cdt) findSide(a, b int32) (int32, int) {
	if t, i := c.findSideFrom(a, b); t >= 0 {
		return t, i
	}
	if t, i := c.findSideFrom(b, a); t >= 0 {
		return t, i
	}
	for t := range int32(len(c.state)) {
		if c.state[t] != live {
			continue
		}
		for i := range 3 {
			p, q := c.tri[3*t+int32(next3(i))], c.tri[3*t+int32(prev3(i))]
			if (p == a && q == b) || (p == b && q == a) {
				return t, i
			}
		}
	}
	return -1, 0
}

func (c *cdt) findSideFrom(a, b int32) (int32, int) {
	ft, fi := int32(-1), 0
	c.around(a, func(t int32, i int) bool {
		switch b {
		case c.tri[3*t+int32(next3(i))]:
			ft, fi = t, prev3(i)
			return false
		case c.tri[3*t+int32(prev3(i))]:
			ft, fi = t, next3(i)
			return false
		}
		return true
	})
	return ft, fi
}
