package fem

// Geometry of one triangle: the vertex coordinates, the area and the
// (constant) gradients of the barycentric coordinates.
type geometry struct {
	x, y   [3]float64
	area   float64
	gl     [3][2]float64 // ∇λ_i
	region int32
}

// geom fills g for triangle k of the space's mesh.
func (s *Space) geom(g *geometry, k int) {
	m := s.Mesh
	for i := range 3 {
		v := m.Tri[3*k+i]
		g.x[i], g.y[i] = m.X[2*v], m.X[2*v+1]
	}
	d := (g.x[1]-g.x[0])*(g.y[2]-g.y[0]) - (g.y[1]-g.y[0])*(g.x[2]-g.x[0])
	g.area = 0.5 * d
	for i := range 3 {
		j, l := (i+1)%3, (i+2)%3
		g.gl[i] = [2]float64{(g.y[j] - g.y[l]) / d, (g.x[l] - g.x[j]) / d}
	}
	g.region = m.Region[k]
}

// point returns the physical point with barycentric coordinates l.
func (g *geometry) point(l [3]float64) (x, y float64) {
	return l[0]*g.x[0] + l[1]*g.x[1] + l[2]*g.x[2], l[0]*g.y[0] + l[1]*g.y[1] + l[2]*g.y[2]
}

// Shape fills phi (length 3·degree) with the values of the local basis
// functions of the given degree at barycentric point l, in the local DOF
// order of Space: for degree 1, λ_i; for degree 2, λ_i(2λ_i − 1) for the
// vertices, then 4λ_jλ_k for the midpoint of the edge opposite vertex i
// ({i, j, k} = {0, 1, 2}).
func Shape(degree int, l [3]float64, phi []float64) { shape(degree, l, phi) }

// shape fills phi with the values of the local basis functions at the
// barycentric point l: for degree 1, λ_i; for degree 2, λ_i(2λ_i − 1) for
// the vertices and 4λ_jλ_k for the midpoint of the edge opposite vertex i.
func shape(degree int, l [3]float64, phi []float64) {
	if degree == 1 {
		phi[0], phi[1], phi[2] = l[0], l[1], l[2]
		return
	}
	for i := range 3 {
		j, k := (i+1)%3, (i+2)%3
		phi[i] = l[i] * (2*l[i] - 1)
		phi[3+i] = 4 * l[j] * l[k]
	}
}

// shapeGrad fills grad with the physical gradients of the local basis
// functions at the barycentric point l.
func shapeGrad(degree int, g *geometry, l [3]float64, grad [][2]float64) {
	if degree == 1 {
		copy(grad, g.gl[:])
		return
	}
	for i := range 3 {
		j, k := (i+1)%3, (i+2)%3
		c := 4*l[i] - 1
		grad[i] = [2]float64{c * g.gl[i][0], c * g.gl[i][1]}
		grad[3+i] = [2]float64{
			4 * (l[k]*g.gl[j][0] + l[j]*g.gl[k][0]),
			4 * (l[k]*g.gl[j][1] + l[j]*g.gl[k][1]),
		}
	}
}

// shapeHessian fills hess with the (constant) second derivatives
// (∂xx, ∂xy, ∂yy) of the degree-2 local basis functions.
func shapeHessian(g *geometry, hess [][3]float64) {
	outer := func(a, b [2]float64) [3]float64 {
		return [3]float64{a[0] * b[0], 0.5 * (a[0]*b[1] + a[1]*b[0]), a[1] * b[1]}
	}
	for i := range 3 {
		j, k := (i+1)%3, (i+2)%3
		o := outer(g.gl[i], g.gl[i])
		hess[i] = [3]float64{4 * o[0], 4 * o[1], 4 * o[2]}
		o = outer(g.gl[j], g.gl[k])
		hess[3+i] = [3]float64{8 * o[0], 8 * o[1], 8 * o[2]}
	}
}
