// Package mesh holds conforming triangle meshes: vertices, triangles,
// region and boundary tags, and the topology derived from them (edges,
// triangle-to-edge and edge-to-triangle maps), with generators for the
// standard test domains, a mesher for polygonal domains with holes and
// materials (Triangulate), validation, refinement, relabelling for
// bisection (Relabel), quality figures, reading and writing of meshes and
// fields, and pictures (WritePNG, whose size does not grow with the mesh,
// on this package's Lichen colour scale).
//
// Package mesh knows nothing of finite elements: it is the ground that
// package fem builds spaces on.
//
// # Conventions
//
// Vertices are numbered from 0 and stored as X[2i], X[2i+1]. Triangles are
// stored counter-clockwise as three int32 vertex indices. The refinement
// edge of triangle (v0, v1, v2) is v1–v2, the edge opposite v0, which is
// called the newest vertex. Bisection joins the midpoint m of v1–v2 to v0
// and gives the children (m, v0, v1) and
// (m, v2, v0), whose newest vertex is m and whose refinement edges are the
// old edges v0–v1 and v2–v0 (newest-vertex bisection). The generators label
// each triangle so that its refinement edge is its longest edge, and the
// two triangles on either side of a refinement edge share it as their
// refinement edge.
//
// Edge i of a triangle is the edge opposite its vertex i, so TriEdge[3k]
// is the refinement edge of triangle k. New numbers the edges by sorting
// their (low, high) vertex pairs; Refine keeps the numbers of old edges and
// appends new ones, so only New's and Reorder's results are sorted. A boundary edge carries a tag ≥ 0 (0 where none
// was given); an interior edge carries Interior (-1). A region is an
// arbitrary int32 per triangle, 0 by default.
//
// A boundary edge, or an interface edge between two regions, may follow
// a curve (a Circle, or a caller's ProjectFunc): Mesh.EdgeCurve names it,
// WithCurves attaches curves to boundary edges by tag,
// WithInterfaceCurves to interface edges by the pair of regions they
// separate, and Triangulate to both by Domain.SegCurve. Bisection puts the new
// vertex of a curved edge on the curve (the projection of the chord
// midpoint; for a circle the arc midpoint) instead of at the chord
// midpoint, unless that would leave a new triangle with less than
// MinCurveArea of its straight area (the curve bending close to an
// interior vertex): then the vertex stays at the chord midpoint and
// Parents.Chord lists it. Triangles stay straight. Relabel, TagBoundary
// and MergeCoincident do not keep curves, and JSON and VTU files keep only
// circles (see ReadJSON and ReadVTU): attach the others again with
// WithCurves (boundary edges, by tag) and WithInterfaceCurves (interface
// edges, by the pair of regions they separate).
//
// Refine and RefineUniform keep the indices of the old vertices and number
// the new ones after them; Reorder renumbers a mesh for locality (vertices
// along a Hilbert curve, triangles and edges after their vertices), and
// Parents.Compose carries a parent map through it. Parents.Vertex maps
// every vertex of a refined mesh to the old vertex it is or the old edge
// it bisects, whichever numbering the new mesh has.
//
// Uniform refinement cuts each triangle into four by bisecting it twice,
// so that the newest-vertex labelling, and with it the bound on the number
// of triangle shapes, is kept.
//
// h_T is the diameter (longest edge) of triangle T; h_E the length of edge E.
//
// # Files
//
// WriteJSON and ReadJSON keep a mesh and its fields (Data) in a compact
// JSON layout of this package; WriteVTU and ReadVTU in the VTK XML
// UnstructuredGrid format (.vtu) that visualisation tools open, in its
// binary encodings (zlib-compressed by default) or ASCII. Both round-trip
// exactly: the same vertices, triangles, regions, boundary tags and field
// values, bit for bit. A P2 field is a Point field with an Edge field of
// the same name (its values at the edge midpoints); VTU files carry it on
// quadratic triangles (VTK cell type 22: corners, then the midpoints of
// edges 0–1, 1–2, 2–0). SaveJSON and SaveVTU write files atomically.
package mesh
