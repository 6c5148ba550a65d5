package scenario

import (
	"bytes"
	"encoding/csv"
	"io"
	"os"
	"path/filepath"
	"strconv"
	"strings"
)

// TB is the part of *testing.T that CheckCommand uses.
type TB interface {
	Helper()
	TempDir() string
	Errorf(format string, args ...any)
	Fatalf(format string, args ...any)
}

// Command is the signature of an example's run function.
type Command func(args []string, stdout, stderr io.Writer) int

// CheckCommand is the shared test of the examples built on Scenario: small
// runs write files that Verify accepts, with one printed row per recorded
// step; -h, -help and --help print the usage with every flag to stdout
// and exit 0; bad flags exit with status 2, one line on stderr and nothing
// written; an output folder that cannot be made fails the same way,
// before any computation.
//
// t is a *testing.T; the interface keeps package testing out of the
// examples' binaries.
func CheckCommand(t TB, run Command) {
	t.Helper()
	for _, args := range [][]string{
		{"-max-dofs", "400"},
		{"-max-dofs", "400", "-p", "2", "-estimator", "spr"},
		{"-max-dofs", "300", "-uniform", "-estimator", "averaging", "-picture", "300", "-zoom", "0.1,0.2,0.05"},
	} {
		dir := filepath.Join(t.TempDir(), "out")
		var out, errs bytes.Buffer
		if code := run(append(args, "-out", dir), &out, &errs); code != 0 {
			t.Fatalf("%v: exit %d: %s", args, code, errs.String())
		}
		steps, err := Verify(dir)
		if err != nil {
			t.Fatalf("%v: %v", args, err)
		}
		rows := 0
		for _, line := range strings.Split(out.String(), "\n") {
			if f := strings.Fields(line); len(f) == 9 {
				if _, err := strconv.Atoi(f[0]); err == nil {
					rows++
				}
			}
		}
		if rows != steps || steps < 2 {
			t.Errorf("%v: %d printed rows, %d recorded steps", args, rows, steps)
		}
	}
	for _, args := range [][]string{
		{"-p", "3"}, {"-estimator", "guess"}, {"-theta", "0"}, {"-theta", "1.5"}, {"-theta", "NaN"},
		{"-max-dofs", "10"}, {"-tol", "-1"}, {"-bogus"}, {"extra"}, {"-out", " "},
		{"-picture", "100"}, {"-zoom", "1,2"}, {"-zoom", "0,0,-1"}, {"-zoom", "0,x,1"},
	} {
		dir := filepath.Join(t.TempDir(), "out")
		full := append(append([]string{}, args...), "-out", dir)
		if args[0] == "-out" {
			full = args
		}
		var out, errs bytes.Buffer
		if code := run(full, &out, &errs); code != 2 {
			t.Errorf("%v: exit %d, want 2", args, code)
		}
		if lines := strings.Count(strings.TrimRight(errs.String(), "\n"), "\n"); lines != 0 || errs.Len() == 0 {
			t.Errorf("%v: stderr %q, want one line", args, errs.String())
		}
		if _, err := os.Stat(dir); !os.IsNotExist(err) {
			t.Errorf("%v: the output folder was created", args)
		}
	}
	// An output folder under a regular file cannot be made: the run stops
	// at once, with one line and status 2, and prints no step.
	file := filepath.Join(t.TempDir(), "file")
	if err := os.WriteFile(file, nil, 0o644); err != nil {
		t.Fatalf("%v", err)
	}
	var out, errs bytes.Buffer
	if code := run([]string{"-out", filepath.Join(file, "out")}, &out, &errs); code != 2 || out.Len() != 0 ||
		strings.Count(strings.TrimRight(errs.String(), "\n"), "\n") != 0 {
		t.Errorf("-out under a file: exit %d, stdout %q, stderr %q; want 2, nothing, one line", code, out.String(), errs.String())
	}
	CheckHelp(t, run, "p", "estimator", "theta", "max-dofs", "tol", "out", "uniform", "goal", "picture", "zoom")
}

// CheckHelp checks that -h, -help and --help print a usage that lists
// every flag in flags to stdout, write nothing to stderr, and exit 0.
func CheckHelp(t TB, run Command, flags ...string) {
	t.Helper()
	for _, h := range []string{"-h", "-help", "--help"} {
		var out, errs bytes.Buffer
		if code := run([]string{h}, &out, &errs); code != 0 || errs.Len() != 0 {
			t.Errorf("%s: exit %d, stderr %q; want 0 and nothing", h, code, errs.String())
		}
		if !strings.HasPrefix(out.String(), "usage: ") {
			t.Errorf("%s: stdout does not start with the usage line: %q", h, out.String())
		}
		for _, f := range flags {
			if !strings.Contains(out.String(), "\n  -"+f+" ") && !strings.Contains(out.String(), "\n  -"+f+"\n") {
				t.Errorf("%s: usage does not list -%s:\n%s", h, f, out.String())
			}
		}
	}
}

// ReadCSV reads a whole CSV file for a test, failing t on an error.
func ReadCSV(t TB, path string) [][]string {
	t.Helper()
	f, err := os.Open(path)
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	defer f.Close()
	rows, err := csv.NewReader(f).ReadAll()
	if err != nil {
		t.Fatalf("%s: %v", path, err)
	}
	return rows
}
