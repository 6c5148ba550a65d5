package mesh

import "slices"

// Outcomes of insertSegment.
const (
	segOK       = iota
	segCrosses  // the segment crosses segment other
	segThrough  // the segment passes through vertex other
	segRepeated // the segment is segment other again
)

// insertSegment makes the edge a–b, with a and b vertices of the
// triangulation, a constrained side carrying the segment number s.
// The triangles it crosses are removed by flipping the crossed edges and
// the Delaunay property is restored among the new edges, which is Sloan's
// algorithm:
//
// References:
//   - S. W. Sloan, A fast algorithm for generating constrained Delaunay
//     triangulations, Computers & Structures 47 (1993) 441–450.
//
// It reports segCrosses or segThrough with the segment or vertex in the
// way, and changes nothing then.
func (c *cdt) insertSegment(a, b, s int32) (outcome int, other int32) {
	if t, i := c.findSide(a, b); t >= 0 {
		if o := c.seg[3*t+int32(i)]; o >= 0 {
			return segRepeated, o
		}
		c.constrain(t, i, s)
		return segOK, -1
	}
	// The triangle at a whose angle holds the direction of b.
	start, si := int32(-1), 0
	outcome, other = segOK, -1
	c.around(a, func(t int32, i int) bool {
		p, q := c.tri[3*t+int32(next3(i))], c.tri[3*t+int32(prev3(i))]
		op, oq := orient(c.x, a, p, b), orient(c.x, a, q, b)
		if op == 0 && ahead(c.x, a, b, p) {
			outcome, other = segThrough, p
			return false
		}
		if oq == 0 && ahead(c.x, a, b, q) {
			outcome, other = segThrough, q
			return false
		}
		if op > 0 && oq < 0 {
			start, si = t, i
			return false
		}
		return true
	})
	if outcome != segOK {
		return outcome, other
	}
	if start < 0 {
		panic("mesh: cdt: no triangle at a vertex faces the segment")
	}
	// Walk to b, listing the crossed edges as (right, left) pairs of
	// a→b.
	var crossed []int32
	t, i := start, si
	right, left := c.tri[3*t+int32(next3(i))], c.tri[3*t+int32(prev3(i))]
	for {
		side := 3*t + int32(i)
		if o := c.seg[side]; o >= 0 {
			return segCrosses, o
		}
		crossed = append(crossed, right, left)
		u := c.nbr[side]
		j := c.side(u, t)
		d := c.tri[3*u+int32(j)]
		if d == b {
			break
		}
		switch orient(c.x, a, b, d) {
		case 0:
			return segThrough, d
		case 1: // d on the left: next edge right–d
			left = d
			t, i = u, c.opposite(u, right, d)
		default:
			right = d
			t, i = u, c.opposite(u, d, left)
		}
	}
	// Flip the crossed edges away.
	var made []int32
	for len(crossed) > 0 {
		u, v := crossed[0], crossed[1]
		crossed = crossed[2:]
		t, i := c.findSide(u, v)
		p := c.tri[3*t+int32(i)]
		w := c.nbr[3*t+int32(i)]
		e := c.tri[3*w+int32(c.side(w, t))]
		if orient(c.x, p, e, u)*orient(c.x, p, e, v) >= 0 {
			crossed = append(crossed, u, v) // not convex: later
			continue
		}
		c.flip(t, i)
		op, oe := orient(c.x, a, b, p), orient(c.x, a, b, e)
		if p != a && p != b && e != a && e != b && op*oe < 0 {
			crossed = append(crossed, p, e)
		} else {
			made = append(made, p, e)
		}
	}
	t, i = c.findSide(a, b)
	c.constrain(t, i, s)
	// Restore the Delaunay property across the new edges.
	for swapped := true; swapped; {
		swapped = false
		for k := 0; k < len(made); k += 2 {
			u, v := made[k], made[k+1]
			if (u == a && v == b) || (u == b && v == a) {
				continue
			}
			t, i := c.findSide(u, v)
			if t < 0 || c.seg[3*t+int32(i)] >= 0 {
				continue
			}
			w := c.nbr[3*t+int32(i)]
			p := c.tri[3*t+int32(i)]
			e := c.tri[3*w+int32(c.side(w, t))]
			if incircle(c.x, c.tri[3*t], c.tri[3*t+1], c.tri[3*t+2], e) > 0 {
				c.flip(t, i)
				made[k], made[k+1] = p, e
				swapped = true
			}
		}
	}
	return segOK, -1
}

// ahead reports whether p, on the line a–b, lies on the side of a where
// b is.
func ahead(x []float64, a, b, p int32) bool {
	return (x[2*p]-x[2*a])*(x[2*b]-x[2*a])+(x[2*p+1]-x[2*a+1])*(x[2*b+1]-x[2*a+1]) > 0
}

// opposite returns the side of t that joins p and q.
func (c *cdt) opposite(t, p, q int32) int {
	for j := range 3 {
		r := c.tri[3*t+int32(j)]
		if r != p && r != q {
			return j
		}
	}
	panic("mesh: cdt: degenerate triangle")
}

// constrain marks side i of t and its twin as lying on segment s.
func (c *cdt) constrain(t int32, i int, s int32) {
	c.seg[3*t+int32(i)] = s
	if u := c.nbr[3*t+int32(i)]; u >= 0 {
		c.seg[3*u+int32(c.side(u, t))] = s
	}
}

// flood gives the state st to the live triangles reachable from t
// without crossing a constrained side, and calls f on each.
func (c *cdt) flood(t int32, st int8, f func(int32)) {
	stack := []int32{t}
	c.state[t] = st
	for len(stack) > 0 {
		t := stack[len(stack)-1]
		stack = stack[:len(stack)-1]
		if f != nil {
			f(t)
		}
		for j := range 3 {
			u := c.nbr[3*t+int32(j)]
			if u < 0 || c.seg[3*t+int32(j)] >= 0 || c.state[u] != live {
				continue
			}
			c.state[u] = st
			stack = append(stack, u)
		}
	}
}

// cut severs the neighbour links between live and removed triangles, so
// that the domain boundary is a side without a neighbour.
func (c *cdt) cut() {
	for t := range int32(len(c.state)) {
		if c.state[t] != live {
			continue
		}
		for j := range 3 {
			u := c.nbr[3*t+int32(j)]
			if u >= 0 && c.state[u] != live {
				c.nbr[3*t+int32(j)] = -1
			}
		}
	}
	for v := range c.vt {
		c.vt[v] = -1
	}
	for t := range int32(len(c.state)) {
		if c.state[t] == live {
			c.vt[c.tri[3*t]], c.vt[c.tri[3*t+1]], c.vt[c.tri[3*t+2]] = t, t, t
		}
	}
	c.last = c.anyLive()
}

// unbounded returns the first of the ns segments that no live triangle
// has on its side, or −1 if every segment bounds a live triangle. Called
// after cut, whose live triangles are the domain's.
func (c *cdt) unbounded(ns int) int {
	bounded := make([]bool, ns)
	for t := range int32(len(c.state)) {
		if c.state[t] != live {
			continue
		}
		for j := range int32(3) {
			if s := c.seg[3*t+j]; s >= 0 {
				bounded[s] = true
			}
		}
	}
	return slices.Index(bounded, false)
}
