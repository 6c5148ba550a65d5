package mesh

import (
	"io"
)

// SaveJSON writes m and d (which may be nil) to the file at path in the
// layout of WriteJSON. The content goes to a temporary file in the same
// folder, renamed over path only when complete, so that a failure never
// leaves a partial file where a good one was.
func SaveJSON(path string, m *Mesh, d *Data) error {
	return WriteFile(path, func(w io.Writer) error { return WriteJSON(w, m, d) })
}

// SaveVTU writes m and d to the file at path as WriteVTU does with opt
// (nil for the default encoding), atomically as SaveJSON.
func SaveVTU(path string, m *Mesh, d *Data, opt *VTUOptions) error {
	return WriteFile(path, func(w io.Writer) error { return WriteVTU(w, m, d, opt) })
}

// SaveSVG writes a picture of m to the file at path as WriteSVG does,
// atomically as SaveJSON.
func SaveSVG(path string, m *Mesh, opt *SVGOptions) error {
	return WriteFile(path, func(w io.Writer) error { return WriteSVG(w, m, opt) })
}
