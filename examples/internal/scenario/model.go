package scenario

import (
	"os"

	"github.com/posteriori-fem/posteriori/fem/known"
)

// Model returns the scenario of the model problem of known.Suite called
// name: its initial mesh, exact solution and data, the default output
// folder out/<name>, and the given title, default DOF budget and reference
// slopes. Model panics if known.Suite has no such problem: the name is a
// constant of the calling example.
func Model(name, title string, maxDOFs int, slopes ...Slope) *Scenario {
	for _, c := range known.Suite() {
		if c.Name != name {
			continue
		}
		ex, p := c.Setup()
		return &Scenario{
			Name:       name,
			Title:      title,
			Mesh:       c.Mesh,
			Exact:      ex,
			Data:       p,
			DefaultOut: "out/" + name,
			MaxDOFs:    maxDOFs,
			Slopes:     slopes,
		}
	}
	panic("scenario: no model problem " + name + " in known.Suite")
}

// Exit runs sc with the arguments of the process and exits with the status
// of Main.
func (sc *Scenario) Exit() { os.Exit(sc.Main(os.Args[1:], os.Stdout, os.Stderr)) }
