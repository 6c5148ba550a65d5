package mesh

import "math"

// Quality holds shape and size figures of a mesh. Angles are in radians;
// h is the diameter (longest edge) of a triangle.
type Quality struct {
	MinAngle, MaxAngle float64 // smallest and largest interior angle of any triangle
	HMin, HMax         float64 // smallest and largest h_T
	AreaMin, AreaMax   float64 // smallest and largest triangle area
}

// Quality returns the quality figures of m. It is linear in the number of
// triangles. A mesh with no triangles (such as the zero Mesh) has no
// figures: the error then wraps ErrEmpty, and ErrLength or ErrIndex for
// arrays that New did not build.
func (m *Mesh) Quality() (Quality, error) {
	if err := checkShape(m, "Quality"); err != nil {
		return Quality{}, err
	}
	q := Quality{
		MinAngle: math.Inf(1), MaxAngle: math.Inf(-1),
		HMin: math.Inf(1), HMax: math.Inf(-1),
		AreaMin: math.Inf(1), AreaMax: math.Inf(-1),
	}
	for k := range m.NumTriangles() {
		t := m.Tri[3*k : 3*k+3]
		for i := range 3 {
			a := angle(m.X, t[i], t[(i+1)%3], t[(i+2)%3])
			q.MinAngle = min(q.MinAngle, a)
			q.MaxAngle = max(q.MaxAngle, a)
		}
		h := m.Diameter(k)
		q.HMin, q.HMax = min(q.HMin, h), max(q.HMax, h)
		ar := m.Area(k)
		q.AreaMin, q.AreaMax = min(q.AreaMin, ar), max(q.AreaMax, ar)
	}
	return q, nil
}

// angle returns the interior angle at vertex a of triangle (a, b, c).
func angle(x []float64, a, b, c int32) float64 {
	ux, uy := x[2*b]-x[2*a], x[2*b+1]-x[2*a+1]
	vx, vy := x[2*c]-x[2*a], x[2*c+1]-x[2*a+1]
	return math.Atan2(math.Abs(ux*vy-uy*vx), ux*vx+uy*vy)
}
