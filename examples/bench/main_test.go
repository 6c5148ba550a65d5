package main

import (
	"bytes"
	"encoding/binary"
	"encoding/json"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
	"testing"

	"github.com/posteriori-fem/posteriori/examples/internal/scenario"
)

func TestRunSmall(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "bench.csv")
	var out, errs bytes.Buffer
	if code := run([]string{"-sizes", "300,1200", "-reps", "1", "-csv", path}, &out, &errs); code != 0 {
		t.Fatalf("exit %d: %s", code, errs.String())
	}
	rows := scenario.ReadCSV(t, path)
	// A header, then every stage for each size.
	stages := []string{"spmv-p1", "loop", "last-step", "spmv-p2", "peak-go", "assemble-p1", "assemble-p2", "solve-p1",
		"residual-p1", "average-p1", "equil-p1", "flux-p1", "dorfler", "refine", "loop-p2"}
	if len(rows[0]) != 9 {
		t.Fatalf("%d columns", len(rows[0]))
	}
	seen := map[string]int{}
	for _, r := range rows[1:] {
		seen[r[0]]++
		if r[0] == "peak-go" || r[0] == "peak-rss" {
			if v, err := strconv.ParseFloat(r[8], 64); err != nil || v < 10 || v > 1e5 {
				t.Errorf("%v: want a plausible byte count per triangle", r)
			}
			continue
		}
		if v, err := strconv.ParseFloat(r[6], 64); err != nil || !(v > 0) {
			t.Errorf("%v: want a positive SpMV ratio", r)
		}
	}
	for _, st := range stages {
		if seen[st] != 2 {
			t.Errorf("stage %s: %d rows, want 2", st, seen[st])
		}
	}
}

// TestWriteSystem checks the files of -system against the system they
// describe: the CSR arrays' lengths and the row pointers' ends.
func TestWriteSystem(t *testing.T) {
	t.Parallel()
	dir := t.TempDir()
	var out, errs bytes.Buffer
	if code := run([]string{"-sizes", "200,400", "-reps", "1", "-system", dir}, &out, &errs); code != 0 {
		t.Fatalf("exit %d: %s", code, errs.String())
	}
	b, err := os.ReadFile(filepath.Join(dir, "system.json"))
	if err != nil {
		t.Fatal(err)
	}
	var h systemHeader
	if err := json.Unmarshal(b, &h); err != nil {
		t.Fatal(err)
	}
	if h.Rows < 400 || h.NNZ < 3*h.Rows {
		t.Fatalf("header %+v: want the 400-DOF mesh's system", h)
	}
	size := func(name string) int64 {
		fi, err := os.Stat(filepath.Join(dir, name))
		if err != nil {
			t.Fatal(err)
		}
		return fi.Size()
	}
	for name, want := range map[string]int{"rowptr.i32": 4 * (h.Rows + 1), "col.i32": 4 * h.NNZ, "val.f64": 8 * h.NNZ, "rhs.f64": 8 * h.Rows} {
		if got := size(name); got != int64(want) {
			t.Errorf("%s: %d bytes, want %d", name, got, want)
		}
	}
	rp, err := os.ReadFile(filepath.Join(dir, "rowptr.i32"))
	if err != nil {
		t.Fatal(err)
	}
	if first, last := binary.LittleEndian.Uint32(rp), binary.LittleEndian.Uint32(rp[len(rp)-4:]); first != 0 || int(last) != h.NNZ {
		t.Errorf("row pointers from %d to %d, want 0 to %d", first, last, h.NNZ)
	}
}

func TestBadFlags(t *testing.T) {
	t.Parallel()
	file := filepath.Join(t.TempDir(), "file")
	if err := os.WriteFile(file, nil, 0o644); err != nil {
		t.Fatal(err)
	}
	for _, args := range [][]string{{"-sizes", "10"}, {"-sizes", "1e4,x"}, {"-reps", "0"}, {"-nope"}, {"extra"},
		{"-sizes", "100", "-csv", filepath.Join(file, "t.csv")}, {"-sizes", "100", "-system", filepath.Join(file, "d")}} {
		var out, errs bytes.Buffer
		if code := run(args, &out, &errs); code != 2 || out.Len() != 0 || strings.Count(strings.TrimRight(errs.String(), "\n"), "\n") != 0 {
			t.Errorf("%v: exit %d, stdout %q, stderr %q; want 2, nothing, one line", args, code, out.String(), errs.String())
		}
	}
	scenario.CheckHelp(t, func(args []string, o, e io.Writer) int { return run(args, o, e) }, "sizes", "reps", "csv", "system")
}
