package mesh

import (
	"bufio"
	"fmt"
	"io"
)

// vtkTriangle is the cell type code of a linear triangle in the VTK file
// formats.
const vtkTriangle = 5

// WriteVTU writes m, and the fields of d if d is not nil, as a VTK XML
// UnstructuredGrid file (.vtu) in ASCII, which common visualisation tools
// open directly.
//
// The points are written with z = 0 as Float64; the cells as Int32
// connectivity, Int64 offsets and UInt8 types (all 5, a linear triangle).
// The cell data always hold an Int32 array "region" with m.Region,
// followed by the Cell fields of d as Float64; the point data hold the
// Point fields. Fields are written in sorted name order and numbers in the
// shortest form that reads back exactly.
//
// d is checked with Data.Check before anything is written; a Cell field may
// not be called "region". Errors from w are returned wrapped.
func WriteVTU(w io.Writer, m *Mesh, d *Data) error {
	if err := checkShape(m, "vtu"); err != nil {
		return err
	}
	if err := d.Check(m); err != nil {
		return err
	}
	var point, cell map[string][]float64
	if d != nil {
		point, cell = d.Point, d.Cell
	}
	if _, ok := cell["region"]; ok {
		return fmt.Errorf("mesh: vtu: cell field name \"region\" is reserved for m.Region: %w", ErrArgument)
	}
	nv, nt := m.NumVertices(), m.NumTriangles()
	t := &textWriter{w: bufio.NewWriter(w)}
	t.str("<?xml version=\"1.0\"?>\n")
	t.str("<VTKFile type=\"UnstructuredGrid\" version=\"1.0\" byte_order=\"LittleEndian\">\n")
	t.str("  <UnstructuredGrid>\n")
	t.printf("    <Piece NumberOfPoints=\"%d\" NumberOfCells=\"%d\">\n", nv, nt)

	t.str("      <PointData>\n")
	for _, name := range sortedNames(point) {
		v := point[name]
		vtuArray(t, "Float64", name, 0, len(v), 6, func(i int) { t.float(v[i]) })
	}
	t.str("      </PointData>\n")

	t.str("      <CellData>\n")
	vtuArray(t, "Int32", "region", 0, nt, 10, func(k int) { t.int(int64(m.Region[k])) })
	for _, name := range sortedNames(cell) {
		v := cell[name]
		vtuArray(t, "Float64", name, 0, len(v), 6, func(i int) { t.float(v[i]) })
	}
	t.str("      </CellData>\n")

	t.str("      <Points>\n")
	vtuArray(t, "Float64", "", 3, 3*nv, 3, func(i int) {
		if i%3 == 2 {
			t.str("0")
			return
		}
		t.float(m.X[2*(i/3)+i%3])
	})
	t.str("      </Points>\n")

	t.str("      <Cells>\n")
	vtuArray(t, "Int32", "connectivity", 0, 3*nt, 3, func(i int) { t.int(int64(m.Tri[i])) })
	vtuArray(t, "Int64", "offsets", 0, nt, 10, func(k int) { t.int(3 * int64(k+1)) })
	vtuArray(t, "UInt8", "types", 0, nt, 20, func(int) { t.int(vtkTriangle) })
	t.str("      </Cells>\n")

	t.str("    </Piece>\n")
	t.str("  </UnstructuredGrid>\n")
	t.str("</VTKFile>\n")
	if err := t.flush(); err != nil {
		return fmt.Errorf("mesh: vtu: write: %w", err)
	}
	return nil
}

// vtuArray writes a DataArray of n values, perLine to a line. name may be
// empty, and ncomp is written when it is positive.
func vtuArray(t *textWriter, typ, name string, ncomp, n, perLine int, write func(i int)) {
	t.str("        <DataArray type=\"" + typ + "\"")
	if name != "" {
		t.str(" Name=\"" + name + "\"")
	}
	if ncomp > 0 {
		t.printf(" NumberOfComponents=\"%d\"", ncomp)
	}
	t.str(" format=\"ascii\">\n")
	for i := 0; i < n && t.err == nil; i++ {
		switch {
		case i%perLine == 0:
			t.str("          ")
		default:
			t.str(" ")
		}
		write(i)
		if i%perLine == perLine-1 || i == n-1 {
			t.str("\n")
		}
	}
	t.str("        </DataArray>\n")
}
