package mesh_test

import (
	"bytes"
	"fmt"
	"os"
	"slices"

	"github.com/posteriori-fem/posteriori/mesh"
)

// ExampleWriteJSON writes the unit square cut into two triangles.
func ExampleWriteJSON() {
	m, err := mesh.Rectangle(0, 0, 1, 1, 1, 1)
	if err != nil {
		fmt.Println(err)
		return
	}
	if err := mesh.WriteJSON(os.Stdout, m, nil); err != nil {
		fmt.Println(err)
	}
	// Output:
	// {"num_vertices":4,
	// "num_triangles":2,
	// "vertices":[[0,0],[1,0],[0,1],[1,1]],
	// "triangles":[[1,3,0],[2,0,3]],
	// "boundary":[[0,1,1],[2,0,4],[1,3,2],[3,2,3]]}
}

// ExampleWriteVTU writes a P2 field on the unit square in the default
// encoding (appended raw data, zlib-compressed) and reads it back.
func ExampleWriteVTU() {
	m, err := mesh.Rectangle(0, 0, 1, 1, 2, 2)
	if err != nil {
		fmt.Println(err)
		return
	}
	// u = x·y: its values at the vertices, then at the edge midpoints.
	u := make([]float64, m.NumVertices())
	for i := range u {
		x, y := m.Vertex(i)
		u[i] = x * y
	}
	mid := make([]float64, m.NumEdges())
	for e := range mid {
		a, b := m.Edge[2*e], m.Edge[2*e+1]
		mid[e] = 0.25 * (m.X[2*a] + m.X[2*b]) * (m.X[2*a+1] + m.X[2*b+1])
	}
	d := &mesh.Data{Point: map[string][]float64{"u": u}, Edge: map[string][]float64{"u": mid}}
	var buf bytes.Buffer
	if err := mesh.WriteVTU(&buf, m, d, nil); err != nil {
		fmt.Println(err)
		return
	}
	m2, d2, err := mesh.ReadVTU(&buf)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println(m2.NumTriangles(), "triangles,", len(d2.Point["u"]), "vertex values,", len(d2.Edge["u"]), "midpoint values")
	fmt.Println("same midpoint values:", slices.Equal(mid, d2.Edge["u"]))
	// Output:
	// 8 triangles, 9 vertex values, 16 midpoint values
	// same midpoint values: true
}
