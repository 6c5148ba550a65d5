package mesh_test

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/mesh"
)

// The unit disc from four points on its circle: the boundary follows the
// circle through meshing and refinement, and the area approaches π.
func ExampleTriangulate_curved() {
	d := &mesh.Domain{
		Points:   []float64{1, 0, 0, 1, -1, 0, 0, -1},
		Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0},
		Curves:   []mesh.Curve{mesh.Circle{R: 1}},
		SegCurve: []int32{0, 0, 0, 0},
	}
	m, rep, err := mesh.Triangulate(d, mesh.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for range 3 {
		area := 0.0
		for k := range m.NumTriangles() {
			area += m.Area(k)
		}
		fmt.Printf("%d triangles, π − area = %.4g\n", m.NumTriangles(), math.Pi-area)
		if m, _, err = m.RefineUniform(); err != nil {
			fmt.Println(err)
			return
		}
	}
	fmt.Println("left on a chord:", rep.OffCurve)
	// Output:
	// 16 triangles, π − area = 0.08013
	// 64 triangles, π − area = 0.02015
	// 256 triangles, π − area = 0.005044
	// left on a chord: 0
}

// A mesh of one's own gets curves by boundary tag.
func ExampleMesh_WithCurves() {
	x := []float64{0, 0}
	var tri []int32
	for i := range 6 {
		a := math.Pi / 3 * float64(i)
		x = append(x, math.Cos(a), math.Sin(a))
		tri = append(tri, 0, int32(1+i), int32(1+(i+1)%6))
	}
	m, _, err := mesh.New(mesh.Arrays{X: x, Tri: tri})
	if err != nil {
		fmt.Println(err)
		return
	}
	if m, err = m.WithCurves(map[int32]mesh.Curve{0: mesh.Circle{R: 1}}); err != nil {
		fmt.Println(err)
		return
	}
	fine, p, err := m.RefineUniform()
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, w := range p.Vertex[p.OldVertices:] {
		e := w - int32(p.OldVertices) // the old edge that new vertex OldVertices+i bisects
		if m.IsBoundary(int(e)) {
			vx, vy := fine.Vertex(p.OldVertices + i)
			fmt.Printf("%d triangles; new boundary vertex %d at radius %.4g, angle %.4g°\n",
				fine.NumTriangles(), p.OldVertices+i, math.Hypot(vx, vy), math.Atan2(vy, vx)*180/math.Pi)
			break
		}
	}
	// Output:
	// 24 triangles; new boundary vertex 13 at radius 1, angle 30°
}

// A round fibre in a square matrix: the fibre's circle is an interface
// between two regions and a curved segment, so refinement keeps its new
// vertices on the circle and the fibre's area approaches π.
func ExampleTriangulate_fibre() {
	d := &mesh.Domain{
		Points: []float64{-2, -2, 2, -2, 2, 2, -2, 2, // the matrix
			1, 0, 0, 1, -1, 0, 0, -1}, // the fibre's circle, at its quarter points
		Segments:   []int32{0, 1, 1, 2, 2, 3, 3, 0, 4, 5, 5, 6, 6, 7, 7, 4},
		Curves:     []mesh.Curve{mesh.Circle{R: 1}},
		SegCurve:   []int32{-1, -1, -1, -1, 0, 0, 0, 0},
		Seeds:      []float64{0, 0}, // the fibre is region 1, the matrix region 0
		SeedRegion: []int32{1},
	}
	m, _, err := mesh.Triangulate(d, mesh.Options{H: 0.5})
	if err != nil {
		fmt.Println(err)
		return
	}
	for range 3 {
		fibre := 0.0
		for k := range m.NumTriangles() {
			if m.Region[k] == 1 {
				fibre += m.Area(k)
			}
		}
		fmt.Printf("%d triangles, π − fibre area = %.3g\n", m.NumTriangles(), math.Pi-fibre)
		if m, _, err = m.RefineUniform(); err != nil {
			fmt.Println(err)
			return
		}
	}
	// Output:
	// 337 triangles, π − fibre area = 0.0726
	// 1348 triangles, π − fibre area = 0.0183
	// 5392 triangles, π − fibre area = 0.00457
}
