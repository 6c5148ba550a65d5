package mesh

import (
	"fmt"
	"math"
)

// maxSagitta bounds, relative to its length, how far the curve may stand
// off a piece of a curved segment before Triangulate refines: pieces are
// split on the curve until each lies within maxSagitta·length of its
// chord's midpoint (an arc of at most about 28.5° on a circle) and is no
// longer than the size bound. Our choice (no source): it keeps the later
// move of the vertices that the refinement adds on the chords small
// beside the triangles around them.
const maxSagitta = 1.0 / 16

// checkCurves validates Curves and SegCurve: lengths, indices, usable
// curves, segment ends on their curves (to CurveTol times the size of the
// domain) and a finite projection at each curved segment's midpoint.
func (d *Domain) checkCurves() error {
	if d.SegCurve == nil {
		return nil
	}
	ns := len(d.Segments) / 2
	if len(d.SegCurve) != ns {
		return domErr(-1, -1, -1, -1, ErrLength, "len(SegCurve) = %d, want %d", len(d.SegCurve), ns)
	}
	tol := CurveTol * boxSize(d.Points)
	for s, k := range d.SegCurve {
		if k == -1 {
			continue
		}
		if k < -1 || int(k) >= len(d.Curves) {
			return domErr(-1, s, -1, -1, ErrIndex, "curve %d of %d", k, len(d.Curves))
		}
		c := d.Curves[k]
		if err := checkCurve(c); err != nil {
			return &DomainError{Point: -1, Segment: s, Hole: -1, Seed: -1, Err: fmt.Errorf("curve %d: %w", k, err)}
		}
		a, b := d.Segments[2*s], d.Segments[2*s+1]
		for _, p := range [2]int32{a, b} {
			if err := onCurve(c, d.Points[2*p], d.Points[2*p+1], tol); err != nil {
				return &DomainError{Point: int(p), Segment: s, Hole: -1, Seed: -1, Err: fmt.Errorf("curve %d: %w", k, err)}
			}
		}
		mx, my := 0.5*(d.Points[2*a]+d.Points[2*b]), 0.5*(d.Points[2*a+1]+d.Points[2*b+1])
		if _, _, err := project(c, mx, my); err != nil {
			return &DomainError{Point: -1, Segment: s, Hole: -1, Seed: -1, Err: fmt.Errorf("curve %d: %w", k, err)}
		}
	}
	return nil
}

// presplit returns the domain whose curved segments are cut on their
// curves into pieces that meet maxSagitta and the size bound of o, with
// segOrig giving the segment of d that each segment of the result lies on
// and ptSeg the segment of d that each added point lies on (the added
// points follow d's). Without curves, or without refinement, it returns d.
func (d *Domain) presplit(o *Options) (d2 *Domain, segOrig, ptSeg []int32, err error) {
	ns := len(d.Segments) / 2
	segOrig = make([]int32, 0, ns)
	curved := false
	for _, k := range d.SegCurve {
		curved = curved || k >= 0
	}
	if !curved || o.NoRefinement {
		for s := range ns {
			segOrig = append(segOrig, int32(s))
		}
		return d, segOrig, nil, nil
	}
	maxV := o.MaxVertices
	if maxV == 0 {
		maxV = 1 << 24
	}
	d2 = &Domain{
		Points:     append([]float64(nil), d.Points...),
		Holes:      d.Holes,
		Seeds:      d.Seeds,
		SeedRegion: d.SeedRegion,
		Curves:     d.Curves,
	}
	hAt := func(s int, x, y float64) (float64, error) {
		h := math.Inf(1)
		if o.H > 0 {
			h = o.H
		}
		if o.Size != nil {
			v := o.Size(x, y)
			if !(v > 0) || math.IsInf(v, 0) {
				return 0, fmt.Errorf("mesh: Triangulate: Size(%g, %g) = %v, want a positive finite length: %w", x, y, v, ErrArgument)
			}
			h = min(h, v)
		}
		return h, nil
	}
	var split func(s int, c Curve, ax, ay, bx, by float64, depth int) error
	split = func(s int, c Curve, ax, ay, bx, by float64, depth int) error {
		mx, my := 0.5*(ax+bx), 0.5*(ay+by)
		px, py, err := project(c, mx, my)
		if err != nil {
			return &DomainError{Point: -1, Segment: s, Hole: -1, Seed: -1, Err: err}
		}
		l := math.Hypot(bx-ax, by-ay)
		h, err := hAt(s, mx, my)
		if err != nil {
			return err
		}
		if math.Hypot(px-mx, py-my) <= maxSagitta*l && l <= h {
			return nil
		}
		if depth >= 48 || len(d2.Points)/2 >= maxV {
			return domErr(-1, s, -1, -1, ErrVertexLimit, "the curve needs more than %d points at this segment", len(d2.Points)/2)
		}
		if err := split(s, c, ax, ay, px, py, depth+1); err != nil {
			return err
		}
		d2.Points = append(d2.Points, px, py)
		ptSeg = append(ptSeg, int32(s))
		return split(s, c, px, py, bx, by, depth+1)
	}
	for s := range ns {
		a, b := d.Segments[2*s], d.Segments[2*s+1]
		tag := int32(0)
		if d.Tags != nil {
			tag = d.Tags[s]
		}
		k := d.SegCurve[s]
		prev := a
		if k >= 0 {
			first := int32(len(d2.Points) / 2)
			if err := split(s, d.Curves[k], d.Points[2*a], d.Points[2*a+1], d.Points[2*b], d.Points[2*b+1], 0); err != nil {
				return nil, nil, nil, err
			}
			for p := first; p < int32(len(d2.Points)/2); p++ {
				d2.Segments = append(d2.Segments, prev, p)
				d2.Tags = append(d2.Tags, tag)
				d2.SegCurve = append(d2.SegCurve, k)
				segOrig = append(segOrig, int32(s))
				prev = p
			}
		}
		d2.Segments = append(d2.Segments, prev, b)
		d2.Tags = append(d2.Tags, tag)
		d2.SegCurve = append(d2.SegCurve, k)
		segOrig = append(segOrig, int32(s))
	}
	return d2, segOrig, ptSeg, nil
}

// followCurves moves the vertices that the refinement added on curved
// segments (on their chords) onto the curves, under the rule of
// MinCurveArea, and returns how many stayed on the chord: on boundary
// segments and on interfaces alike (the check of MinCurveArea covers the
// triangles on both sides). segOrig maps the segments of r.d to the
// caller's.
func (r *delaunayRefiner) followCurves(segOrig []int32) (offCurve int, err error) {
	c := r.c
	if r.d.SegCurve == nil {
		return 0, nil
	}
	var tri []int32
	for t := range int32(len(c.state)) {
		if c.state[t] != live {
			continue
		}
		tri = append(tri, c.tri[3*t:3*t+3]...)
	}
	nv := len(c.vt)
	moved := make([]bool, nv)
	chord := append([]float64(nil), c.x...)
	any := false
	for v := range nv {
		s := int32(-1)
		if v < len(r.onSeg) {
			s = r.onSeg[v]
		}
		if s < 0 || r.d.SegCurve[s] < 0 {
			continue
		}
		px, py, err := project(r.d.Curves[r.d.SegCurve[s]], c.x[2*v], c.x[2*v+1])
		if err != nil {
			return 0, &DomainError{Point: -1, Segment: int(segOrig[s]), Hole: -1, Seed: -1, Err: err}
		}
		c.x[2*v], c.x[2*v+1] = px, py
		moved[v], any = true, true
	}
	if !any {
		return 0, nil
	}
	back := settleCurves(c.x, tri, 0, moved, chord)
	return len(back), nil
}
