package known

import (
	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// Case is one model problem with a suggested initial mesh.
type Case struct {
	Name  string                           // a short name: smooth, lshape, slit, kellogg, peak, layer
	About string                           // one line: the exact solution and the domain
	Mesh  func() (*mesh.Mesh, error)       // a coarse initial mesh of the domain
	Setup func() (fem.Exact, *fem.Problem) // the exact solution and the data, new at each call
	// Hard marks a problem whose adaptive runs take many more steps than
	// the others to the same DOF budget (Kellogg: about 70 against 30).
	Hard bool
}

// Suite returns the model problems, in a fixed order: smooth, lshape, slit,
// kellogg, peak, layer.
func Suite() []Case {
	return []Case{
		{"smooth", "u = sin(πx) sin(πy) on the unit square",
			func() (*mesh.Mesh, error) { return mesh.Rectangle(0, 0, 1, 1, 2, 2) }, Sine, false},
		{"lshape", "u = r^(2/3) sin(2θ/3) on the L-shaped domain",
			func() (*mesh.Mesh, error) { return mesh.LShape(2) }, LShape, false},
		{"slit", "u = r^(1/2) sin(θ/2) on the slit square",
			func() (*mesh.Mesh, error) { return mesh.Slit(2) }, Slit, false},
		{"kellogg", "checkerboard diffusion (contrast 161), u = r^0.1 μ(θ)",
			func() (*mesh.Mesh, error) { return mesh.Quadrants(2) }, Kellogg, true},
		{"peak", "Gaussian peak exp(−1000 r²) at (0.6, 0.4)",
			func() (*mesh.Mesh, error) { return mesh.Rectangle(0, 0, 1, 1, 4, 4) }, Peak, false},
		{"layer", "boundary layer exp(−x/0.01) + y along x = 0",
			func() (*mesh.Mesh, error) { return mesh.Rectangle(0, 0, 1, 1, 4, 4) }, Layer, false},
	}
}
