package main

import (
	"bytes"
	"os"
	"path/filepath"
	"testing"

	"github.com/posteriori-fem/posteriori/adapt"
	"github.com/posteriori-fem/posteriori/examples/internal/scenario"
)

// TestGoalFlag runs the example with each kind of -goal and checks the goal
// columns of its history; bad -goal values are usage errors (status 2).
func TestGoalFlag(t *testing.T) {
	for _, g := range []string{"box:0.5,0.5,1,1", "region:0", "flux:5"} {
		dir := t.TempDir()
		var out, errb bytes.Buffer
		if rc := command().Main([]string{"-goal", g, "-max-dofs", "800", "-out", dir}, &out, &errb); rc != 0 {
			t.Fatalf("-goal %s: status %d: %s", g, rc, errb.String())
		}
		if _, err := scenario.Verify(dir); err != nil {
			t.Fatal(err)
		}
		f, err := os.Open(filepath.Join(dir, scenario.HistoryFile))
		if err != nil {
			t.Fatal(err)
		}
		steps, err := adapt.ReadCSV(f)
		f.Close()
		if err != nil {
			t.Fatal(err)
		}
		for _, s := range steps {
			if !s.HasGoal || !s.HasGoalError {
				t.Errorf("-goal %s: step %d has no goal columns", g, s.Step)
			}
		}
	}
	for _, bad := range []string{"box:1,2", "box:1,0,0,1", "region:x", "mean:3"} {
		var out, errb bytes.Buffer
		if rc := command().Main([]string{"-goal", bad, "-out", t.TempDir()}, &out, &errb); rc != 2 {
			t.Errorf("-goal %s: status %d, want 2", bad, rc)
		}
	}
}
