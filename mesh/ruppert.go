package mesh

import (
	"fmt"
	"math"
)

// delaunayRefiner runs the Delaunay refinement of Triangulate on a carved
// constrained Delaunay triangulation and writes the result as a Mesh.
type delaunayRefiner struct {
	c      *cdt
	d      *Domain
	pv     []int32 // cdt vertex of each input point
	input  []int32 // per cdt vertex: the input point, or -1
	onSeg  []int32 // per cdt vertex: the segment it was added on, or -1
	ptSegs [][]int32
	sin2   float64 // 4 sin²θ
	h      float64
	size   func(x, y float64) float64
	maxV   int

	seen  []uint32 // cavity search marks, by generation
	gen   uint32
	stack []int32

	segQ []subseg
	triQ []badTri
	err  error
}

type subseg struct {
	p, q  int32
	force bool // split even if no vertex encroaches it now
}

type badTri struct {
	t       int32
	a, b, d int32 // its vertices when queued, to skip stale entries
	tries   int32 // how often it was put back behind subsegment splits
}

// maxTries bounds how often a triangle is put back behind the splits of
// the subsegments its circumcenter encroaches: each split makes progress
// unless float64 has no room for the new vertex, and then the triangle is
// left as it is.
const maxTries = 64

func newDelaunayRefiner(c *cdt, d *Domain, pv []int32, o *Options) *delaunayRefiner {
	r := &delaunayRefiner{c: c, d: d, pv: pv, h: o.H, size: o.Size, maxV: o.MaxVertices}
	theta := o.MinAngle
	if theta == 0 {
		theta = 20
	}
	s := math.Sin(theta * math.Pi / 180)
	r.sin2 = 4 * s * s
	if r.maxV == 0 {
		r.maxV = 1 << 24
	}
	r.input = make([]int32, len(c.vt))
	r.onSeg = make([]int32, len(c.vt))
	for i := range r.input {
		r.input[i], r.onSeg[i] = -1, -1
	}
	for p, v := range pv {
		r.input[v] = int32(p)
	}
	r.ptSegs = make([][]int32, len(pv))
	for s := range len(d.Segments) / 2 {
		a, b := d.Segments[2*s], d.Segments[2*s+1]
		r.ptSegs[a] = append(r.ptSegs[a], int32(s))
		r.ptSegs[b] = append(r.ptSegs[b], int32(s))
	}
	return r
}

func (r *delaunayRefiner) xy(v int32) (float64, float64) { return r.c.x[2*v], r.c.x[2*v+1] }

// encroached reports whether w lies strictly inside the diametral circle
// of p–q.
func (r *delaunayRefiner) encroached(p, q, w int32) bool {
	px, py := r.xy(p)
	qx, qy := r.xy(q)
	wx, wy := r.xy(w)
	return (px-wx)*(qx-wx)+(py-wy)*(qy-wy) < 0
}

// hAt returns the size bound at (x, y), +Inf for none.
func (r *delaunayRefiner) hAt(x, y float64) float64 {
	h := math.Inf(1)
	if r.h > 0 {
		h = r.h
	}
	if r.size != nil {
		s := r.size(x, y)
		if !(s > 0) || math.IsInf(s, 0) {
			if r.err == nil {
				r.err = fmt.Errorf("mesh: Triangulate: Size(%g, %g) = %v, want a positive finite length: %w", x, y, s, ErrArgument)
			}
			return math.Inf(1)
		}
		h = min(h, s)
	}
	return h
}

// tooLong reports whether the subsegment p–q exceeds the size bound.
func (r *delaunayRefiner) tooLong(p, q int32) bool {
	if r.h == 0 && r.size == nil {
		return false
	}
	px, py := r.xy(p)
	qx, qy := r.xy(q)
	return math.Hypot(qx-px, qy-py) > r.hAt((px+qx)/2, (py+qy)/2)
}

// checkSides queues the constrained sides of t that its apex encroaches or
// that are too long.
func (r *delaunayRefiner) checkSides(t int32) {
	c := r.c
	for i := range 3 {
		if c.seg[3*t+int32(i)] < 0 {
			continue
		}
		p, q := c.tri[3*t+int32(next3(i))], c.tri[3*t+int32(prev3(i))]
		if r.encroached(p, q, c.tri[3*t+int32(i)]) || r.tooLong(p, q) {
			r.segQ = append(r.segQ, subseg{p: p, q: q})
		}
	}
}

// bad reports whether t fails the angle or the size bound, and whether it
// is sheltered by a small input angle.
func (r *delaunayRefiner) bad(t int32) (bad, sheltered bool) {
	c := r.c
	a, b, d := c.tri[3*t], c.tri[3*t+1], c.tri[3*t+2]
	l := [3]float64{dist2(c.x, b, d), dist2(c.x, d, a), dist2(c.x, a, b)}
	ar := cross(c.x, a, b, d) // twice the area
	lmin, lmax := min(l[0], l[1], l[2]), max(l[0], l[1], l[2])
	// sin²(smallest angle) = (2A)² / (product of the two longer sides²),
	// and the smallest angle is opposite the shortest side.
	if r.h != 0 || r.size != nil {
		gx := (c.x[2*a] + c.x[2*b] + c.x[2*d]) / 3
		gy := (c.x[2*a+1] + c.x[2*b+1] + c.x[2*d+1]) / 3
		h := r.hAt(gx, gy)
		if lmax > h*h {
			return true, false
		}
	}
	if ar*ar >= r.sin2/4*(l[0]*l[1]*l[2]/lmin) {
		return false, false
	}
	i := 0
	for j := range 3 {
		if l[j] == lmin {
			i = j
			break
		}
	}
	return true, r.shelter(c.tri[3*t+int32(next3(i))], c.tri[3*t+int32(prev3(i))])
}

// segsOf returns the input segments that vertex v lies on.
func (r *delaunayRefiner) segsOf(v int32) []int32 {
	if p := r.input[v]; p >= 0 {
		return r.ptSegs[p]
	}
	if s := r.onSeg[v]; s >= 0 {
		return []int32{s}
	}
	return nil
}

// shelter reports whether the edge p–q joins two points on two segments
// that meet at an input point at an angle below 60°, at equal distances
// (to 1e-6 relative) from it.
func (r *delaunayRefiner) shelter(p, q int32) bool {
	sp, sq := r.segsOf(p), r.segsOf(q)
	for _, s1 := range sp {
		for _, s2 := range sq {
			if s1 == s2 {
				continue
			}
			apex := commonEnd(r.d.Segments, s1, s2)
			if apex < 0 {
				continue
			}
			a := r.pv[apex]
			if a == p || a == q {
				continue
			}
			o1 := otherEnd(r.d.Segments, s1, apex)
			o2 := otherEnd(r.d.Segments, s2, apex)
			if angleAt(r.c.x, a, r.pv[o1], r.pv[o2]) >= math.Pi/3 {
				continue
			}
			dp, dq := math.Sqrt(dist2(r.c.x, a, p)), math.Sqrt(dist2(r.c.x, a, q))
			if math.Abs(dp-dq) <= 1e-6*max(dp, dq) {
				return true
			}
		}
	}
	return false
}

func commonEnd(seg []int32, s1, s2 int32) int32 {
	a1, b1, a2, b2 := seg[2*s1], seg[2*s1+1], seg[2*s2], seg[2*s2+1]
	switch {
	case a1 == a2 || a1 == b2:
		return a1
	case b1 == a2 || b1 == b2:
		return b1
	}
	return -1
}

func otherEnd(seg []int32, s, p int32) int32 {
	if seg[2*s] == p {
		return seg[2*s+1]
	}
	return seg[2*s]
}

func angleAt(x []float64, a, b, c int32) float64 { return angle(x, a, b, c) }

func (r *delaunayRefiner) queueTri(t int32) {
	if bad, sheltered := r.bad(t); bad && !sheltered {
		c := r.c
		r.triQ = append(r.triQ, badTri{t, c.tri[3*t], c.tri[3*t+1], c.tri[3*t+2], 0})
	}
}

// after examines the triangles around the new vertex v.
func (r *delaunayRefiner) after(v int32) {
	r.input = append(r.input, -1)
	r.c.around(v, func(t int32, _ int) bool {
		r.checkSides(t)
		r.queueTri(t)
		return true
	})
}

// run refines until no subsegment is encroached or too long and no
// triangle is bad outside the shelter.
func (r *delaunayRefiner) run() error {
	c := r.c
	for t := range int32(len(c.state)) {
		if c.state[t] == live {
			r.checkSides(t)
			r.queueTri(t)
		}
	}
	for r.err == nil {
		if len(c.vt) > r.maxV {
			return fmt.Errorf("mesh: Triangulate: %w: more than %d", ErrVertexLimit, r.maxV)
		}
		if n := len(r.segQ); n > 0 {
			s := r.segQ[n-1]
			r.segQ = r.segQ[:n-1]
			r.splitSeg(s)
			continue
		}
		if len(r.triQ) == 0 {
			break
		}
		b := r.triQ[0]
		r.triQ = r.triQ[1:]
		if c.state[b.t] != live || c.tri[3*b.t] != b.a || c.tri[3*b.t+1] != b.b || c.tri[3*b.t+2] != b.d {
			continue
		}
		r.splitTri(b)
	}
	return r.err
}

// splitSeg splits the subsegment s if it still exists and needs it.
func (r *delaunayRefiner) splitSeg(s subseg) {
	c := r.c
	t, i := c.findSide(s.p, s.q)
	if t < 0 || c.seg[3*t+int32(i)] < 0 {
		return
	}
	if !s.force {
		need := r.encroached(s.p, s.q, c.tri[3*t+int32(i)]) || r.tooLong(s.p, s.q)
		if u := c.nbr[3*t+int32(i)]; u >= 0 {
			need = need || r.encroached(s.p, s.q, c.tri[3*u+int32(c.side(u, t))])
		}
		if !need {
			return
		}
	}
	p, q := s.p, s.q
	if r.input[q] >= 0 && r.input[p] < 0 {
		p, q = q, p
	}
	px, py := r.xy(p)
	qx, qy := r.xy(q)
	f := 0.5
	if r.input[p] >= 0 && r.input[q] < 0 {
		// Concentric shells: the power of two nearest half the length.
		l := math.Hypot(qx-px, qy-py)
		f = math.Exp2(math.Round(math.Log2(l/2))) / l
	}
	mx, my := px+f*(qx-px), py+f*(qy-py)
	if (mx == px && my == py) || (mx == qx && my == qy) {
		return // no float64 point between the ends
	}
	seg := c.seg[3*t+int32(i)]
	v := c.addVertex(mx, my)
	r.onSeg = append(r.onSeg, seg)
	c.insertOn(t, i, v)
	r.after(v)
}

// splitTri inserts the circumcenter of t, or splits the subsegments it
// would encroach.
func (r *delaunayRefiner) splitTri(bt badTri) {
	c := r.c
	t := bt.t
	a, b, d := c.tri[3*t], c.tri[3*t+1], c.tri[3*t+2]
	ax, ay := r.xy(a)
	bx, by := r.xy(b)
	dx, dy := r.xy(d)
	// Circumcenter relative to a.
	bx, by, dx, dy = bx-ax, by-ay, dx-ax, dy-ay
	den := 2 * (bx*dy - by*dx)
	b2, d2 := bx*bx+by*by, dx*dx+dy*dy
	cx := ax + (dy*b2-by*d2)/den
	cy := ay + (bx*d2-dx*b2)/den
	if math.IsNaN(cx) || math.IsInf(cx, 0) || math.IsNaN(cy) || math.IsInf(cy, 0) {
		return
	}
	ox, oy := ax+(bx+dx)/3, ay+(by+dy)/3
	// Walk along the straight line from the centroid to the circumcenter.
	cur := t
	where, side := inside, 0
	for step := 0; ; step++ {
		if step > len(c.state) {
			return
		}
		w, k := c.classify(cur, cx, cy)
		if w != outside {
			where, side = w, k
			break
		}
		exit := -1
		for j := range 3 {
			p, q := c.tri[3*cur+int32(next3(j))], c.tri[3*cur+int32(prev3(j))]
			px, py := r.xy(p)
			qx, qy := r.xy(q)
			if orientXY(px, py, qx, qy, cx, cy) < 0 &&
				orientXY(ox, oy, cx, cy, px, py) <= 0 && orientXY(ox, oy, cx, cy, qx, qy) >= 0 {
				exit = j
				break
			}
		}
		if exit < 0 {
			return
		}
		u := c.nbr[3*cur+int32(exit)]
		if c.seg[3*cur+int32(exit)] >= 0 || u < 0 {
			p, q := c.tri[3*cur+int32(next3(exit))], c.tri[3*cur+int32(prev3(exit))]
			r.segQ = append(r.segQ, subseg{p, q, true})
			r.requeue(bt)
			return
		}
		cur = u
	}
	if where == onVertex {
		return
	}
	// The cavity: the triangles whose circumcircle holds the point,
	// reached without crossing a constrained side. Subsegments on its
	// boundary that the point encroaches are split instead.
	v := c.addVertex(cx, cy)
	found := false
	r.gen++
	for len(r.seen) < len(c.state) {
		r.seen = append(r.seen, 0)
	}
	r.seen[cur] = r.gen
	stack := append(r.stack[:0], cur)
	defer func() { r.stack = stack[:0] }()
	for len(stack) > 0 {
		u := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		for j := range 3 {
			p, q := c.tri[3*u+int32(next3(j))], c.tri[3*u+int32(prev3(j))]
			if c.seg[3*u+int32(j)] >= 0 {
				if r.encroached(p, q, v) {
					r.segQ = append(r.segQ, subseg{p, q, true})
					found = true
				}
				continue
			}
			w := c.nbr[3*u+int32(j)]
			if w < 0 || r.seen[w] == r.gen {
				continue
			}
			if incircle(c.x, c.tri[3*w], c.tri[3*w+1], c.tri[3*w+2], v) > 0 {
				r.seen[w] = r.gen
				stack = append(stack, w)
			}
		}
	}
	if found {
		c.x = c.x[:len(c.x)-2]
		c.vt = c.vt[:len(c.vt)-1]
		r.requeue(bt)
		return
	}
	r.onSeg = append(r.onSeg, -1)
	if where == inside {
		c.insertIn(cur, v)
	} else {
		c.insertOn(cur, side, v)
	}
	r.after(v)
}

func (r *delaunayRefiner) requeue(b badTri) {
	if b.tries < maxTries {
		b.tries++
		r.triQ = append(r.triQ, b)
	}
}
