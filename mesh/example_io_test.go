package mesh_test

import (
	"fmt"
	"os"

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
	// "regions":[0,0],
	// "boundary":[[0,1,1],[2,0,4],[1,3,2],[3,2,3]]}
}
