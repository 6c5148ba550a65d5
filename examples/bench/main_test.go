package main

import (
	"bytes"
	"encoding/csv"
	"os"
	"path/filepath"
	"testing"
)

func TestRunSmall(t *testing.T) {
	t.Parallel()
	path := filepath.Join(t.TempDir(), "bench.csv")
	var out, errs bytes.Buffer
	if code := run([]string{"-sizes", "300,1200", "-reps", "1", "-csv", path}, &out, &errs); code != 0 {
		t.Fatalf("exit %d: %s", code, errs.String())
	}
	f, err := os.Open(path)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatal(err)
	}
	// A header, then eleven stages per size.
	if len(rows) != 1+2*11 || len(rows[0]) != 7 {
		t.Fatalf("%d rows of %d columns", len(rows), len(rows[0]))
	}
}

func TestBadFlags(t *testing.T) {
	t.Parallel()
	for _, args := range [][]string{{"-sizes", "10"}, {"-sizes", "1e4,x"}, {"-reps", "0"}, {"-nope"}} {
		var out, errs bytes.Buffer
		if code := run(args, &out, &errs); code != 2 {
			t.Errorf("%v: exit %d, want 2", args, code)
		}
	}
}
