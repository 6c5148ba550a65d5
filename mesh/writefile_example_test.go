package mesh_test

import (
	"fmt"
	"io"
	"os"
	"path/filepath"

	"github.com/posteriori-fem/posteriori/mesh"
)

func ExampleWriteFile() {
	dir, _ := os.MkdirTemp("", "example")
	defer os.RemoveAll(dir)
	path := filepath.Join(dir, "steps.csv")
	err := mesh.WriteFile(path, func(w io.Writer) error {
		_, err := io.WriteString(w, "step,dofs\n0,21\n")
		return err
	})
	b, _ := os.ReadFile(path)
	fmt.Printf("%v %q\n", err, b)
	// Output: <nil> "step,dofs\n0,21\n"
}
