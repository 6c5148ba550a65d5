package mesh_test

import (
	"fmt"
	"math"

	"github.com/posteriori-fem/posteriori/mesh"
)

// A T-shaped fin of two materials: a stem [1.5, 2.5] × [0, 3] (region 1)
// under a flange [0, 4] × [3, 4] (region 2). The eight corners are listed
// counter-clockwise; segments 0 to 7 are the boundary, segment 8 the
// interface y = 3 between the materials, and one seed point per material
// gives its region tag. The base (segment 0) carries boundary tag 1, the
// other sides tag 2.
func ExampleTriangulate_fin() {
	fin := &mesh.Domain{
		Points: []float64{
			1.5, 0, 2.5, 0, 2.5, 3, 4, 3, 4, 4, 0, 4, 0, 3, 1.5, 3,
		},
		Segments: []int32{
			0, 1, 1, 2, 2, 3, 3, 4, 4, 5, 5, 6, 6, 7, 7, 0, // boundary
			7, 2, // interface
		},
		Tags:       []int32{1, 2, 2, 2, 2, 2, 2, 2, 0},
		Seeds:      []float64{2, 1, 2, 3.5},
		SeedRegion: []int32{1, 2},
	}
	m, rep, err := mesh.Triangulate(fin, mesh.Options{H: 0.25})
	if err != nil {
		fmt.Println(err)
		return
	}
	area := map[int32]float64{}
	for k := range m.NumTriangles() {
		area[m.Region[k]] += m.Area(k)
	}
	q, _ := m.Quality()
	fmt.Printf("%d triangles, %d vertices (%d added)\n", m.NumTriangles(), m.NumVertices(), rep.Added)
	fmt.Printf("area of region 1: %.4g, region 2: %.4g\n", area[1], area[2])
	fmt.Printf("smallest angle %.4g°, longest edge %.4g\n", q.MinAngle*180/math.Pi, q.HMax)
	// Output:
	// 578 triangles, 339 vertices (331 added)
	// area of region 1: 3, region 2: 4
	// smallest angle 28.8°, longest edge 0.25
}

// A square plate [0, 2]² with a hole: a regular 24-gon of radius 0.5
// about the centre, marked by a point inside it. The sides carry tags 1
// to 4, the hole's edges tag 5. A size function grades the mesh towards
// the hole.
func ExampleTriangulate_plate() {
	plate := &mesh.Domain{
		Points:   []float64{0, 0, 2, 0, 2, 2, 0, 2},
		Segments: []int32{0, 1, 1, 2, 2, 3, 3, 0},
		Tags:     []int32{1, 2, 3, 4},
		Holes:    []float64{1, 1},
	}
	const n = 24
	for i := range n {
		a := 2 * math.Pi * float64(i) / n
		plate.Points = append(plate.Points, 1+0.5*math.Cos(a), 1+0.5*math.Sin(a))
		plate.Segments = append(plate.Segments, int32(4+i), int32(4+(i+1)%n))
		plate.Tags = append(plate.Tags, 5)
	}
	size := func(x, y float64) float64 { return 0.05 + 0.2*(math.Hypot(x-1, y-1)-0.5) }
	m, rep, err := mesh.Triangulate(plate, mesh.Options{Size: size})
	if err != nil {
		fmt.Println(err)
		return
	}
	area := 0.0
	for k := range m.NumTriangles() {
		area += m.Area(k)
	}
	holeEdges := 0
	_, tags := m.BoundaryEdges()
	for _, tag := range tags {
		if tag == 5 {
			holeEdges++
		}
	}
	fmt.Printf("%d triangles, %d edges on the hole\n", m.NumTriangles(), holeEdges)
	fmt.Printf("area %.6f = 4 − 12 r² sin(π/12): %.6f\n", area, 4-12*0.25*math.Sin(math.Pi/12))
	fmt.Printf("smallest angle %.4g°\n", rep.MinAngle)
	// Output:
	// 1659 triangles, 96 edges on the hole
	// area 3.223543 = 4 − 12 r² sin(π/12): 3.223543
	// smallest angle 29.69°
}

// Relabel a hand-written mesh for bisection: two triangles of the unit
// square whose vertex order makes a leg the refinement edge.
func ExampleMesh_Relabel() {
	m, _, err := mesh.New(mesh.Arrays{
		X:   []float64{0, 0, 1, 0, 1, 1, 0, 1},
		Tri: []int32{0, 1, 2, 0, 2, 3},
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	r, unmatched, err := m.Relabel()
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Println("before:", m.Tri, "after:", r.Tri, "unmatched:", unmatched)
	// Output:
	// before: [0 1 2 0 2 3] after: [1 2 0 3 0 2] unmatched: 0
}

// Tag the boundary of a mesh by a rule of the edge midpoints, in one call.
func ExampleMesh_TagBoundary() {
	m, _ := mesh.Rectangle(0, 0, 2, 1, 4, 2)
	hot, err := m.TagBoundary(func(x, y float64) int32 {
		if x == 0 {
			return 7
		}
		return 1
	})
	if err != nil {
		fmt.Println(err)
		return
	}
	n := 0
	_, tags := hot.BoundaryEdges()
	for _, tag := range tags {
		if tag == 7 {
			n++
		}
	}
	fmt.Printf("%d of %d boundary edges tagged 7\n", n, len(tags))
	// Output:
	// 2 of 12 boundary edges tagged 7
}
