package main

import (
	"encoding/binary"
	"encoding/json"
	"fmt"
	"io"
	"path/filepath"

	"github.com/posteriori-fem/posteriori/fem"
	"github.com/posteriori-fem/posteriori/mesh"
)

// systemHeader describes the files writeSystem writes.
type systemHeader struct {
	Rows  int      `json:"rows"`
	NNZ   int      `json:"nnz"`
	Files []string `json:"files"`
	About string   `json:"about"`
}

// writeSystem writes the matrix of sys in compressed sparse row form and
// its right-hand side into dir: system.json (sizes and file names), then
// rowptr.i32 (rows+1 values), col.i32 and val.f64 (nnz values each) and
// rhs.f64 (rows values), all little-endian, with no header of their own.
// The Dirichlet rows are identity rows (fem.Assemble).
func writeSystem(dir string, sys *fem.System) error {
	a := sys.A
	files := []struct {
		name string
		data any
	}{
		{"rowptr.i32", a.RowPtr}, {"col.i32", a.Col}, {"val.f64", a.Val}, {"rhs.f64", sys.B},
	}
	h := systemHeader{Rows: a.Rows, NNZ: a.NNZ(),
		About: "P1 stiffness matrix (CSR, little-endian int32/float64) and load of the L-shape loop's final mesh; Dirichlet rows are identity rows"}
	for _, f := range files {
		h.Files = append(h.Files, f.name)
		err := mesh.WriteFile(filepath.Join(dir, f.name), func(w io.Writer) error { return binary.Write(w, binary.LittleEndian, f.data) })
		if err != nil {
			return fmt.Errorf("-system: %w", err)
		}
	}
	err := mesh.WriteFile(filepath.Join(dir, "system.json"), func(w io.Writer) error {
		e := json.NewEncoder(w)
		e.SetIndent("", "  ")
		return e.Encode(h)
	})
	if err != nil {
		return fmt.Errorf("-system: %w", err)
	}
	return nil
}
