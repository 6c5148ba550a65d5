package mesh_test

import (
	"fmt"

	"github.com/posteriori-fem/posteriori/mesh"
)

// Refine the L-shape three times at the triangles that touch the
// re-entrant corner, and look at the result.
func ExampleMesh_Refine() {
	m, _ := mesh.LShape(2)
	for range 3 {
		marked := make([]bool, m.NumTriangles())
		for k := range marked {
			for _, v := range m.Tri[3*k : 3*k+3] {
				if x, y := m.Vertex(int(v)); x == 0 && y == 0 {
					marked[k] = true
				}
			}
		}
		fine, parents, err := m.Refine(marked)
		if err != nil {
			fmt.Println(err)
			return
		}
		fmt.Printf("%d triangles -> %d, %d new vertices\n", m.NumTriangles(), fine.NumTriangles(), len(parents.Vertex)-parents.OldVertices)
		m = fine
	}
	q, err := m.Quality()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("h from %.4g to %.4g, smallest angle %.4g rad\n", q.HMin, q.HMax, q.MinAngle)
	// Output:
	// 24 triangles -> 30, 3 new vertices
	// 30 triangles -> 36, 4 new vertices
	// 36 triangles -> 42, 3 new vertices
	// h from 0.25 to 0.7071, smallest angle 0.7854 rad
}

// Build a mesh from arrays; a clockwise triangle is turned around.
func ExampleNew() {
	m, reoriented, err := mesh.New(mesh.Arrays{
		X:      []float64{0, 0, 1, 0, 1, 1, 0, 1},
		Tri:    []int32{1, 0, 2, 3, 0, 2}, // the first is clockwise
		Bnd:    []int32{0, 1},
		BndTag: []int32{7},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m.NumTriangles(), "triangles,", m.NumEdges(), "edges, reoriented:", reoriented)
	_, _, err = mesh.New(mesh.Arrays{X: []float64{0, 0, 1, 0, 2, 0}, Tri: []int32{0, 1, 2}})
	fmt.Println(err)
	// Output:
	// 2 triangles, 5 edges, reoriented: [0]
	// mesh: triangle 0: zero area
}
