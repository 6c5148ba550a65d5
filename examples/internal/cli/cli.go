// Package cli holds the command-line rules that every example follows:
// usage with every flag on -h, one-line errors with exit status 2 for a
// bad command line, one DOF budget range, and an output folder checked
// before any computation starts.
package cli

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"os"
	"path/filepath"
	"strings"
)

// The DOF budget range of every example's -max-dofs flag.
const (
	MinDOFs = 50
	MaxDOFs = 4_000_000
)

// ErrHelp is returned by Parse after it printed the usage.
var ErrHelp = flag.ErrHelp

// Parse parses args into fs. Asked for help (-h, -help or --help), it
// prints to stdout the usage line, the about text and every flag with its
// default, and returns ErrHelp (exit status 0). A flag that does not parse
// or a stray argument gives a one-line error that names it.
func Parse(fs *flag.FlagSet, args []string, usage, about string, stdout io.Writer) error {
	fs.SetOutput(io.Discard)
	fs.Usage = func() {}
	if err := fs.Parse(args); err != nil {
		if errors.Is(err, flag.ErrHelp) {
			PrintUsage(stdout, fs, usage, about)
			return ErrHelp
		}
		return fmt.Errorf("%v (see -h)", err)
	}
	if fs.NArg() > 0 {
		return fmt.Errorf("unexpected argument %q (see -h)", fs.Arg(0))
	}
	return nil
}

// PrintUsage writes the usage line, the about text and the flags of fs.
func PrintUsage(w io.Writer, fs *flag.FlagSet, usage, about string) {
	fmt.Fprintf(w, "usage: %s\n\n%s\n\nflags:\n", usage, strings.TrimSpace(about))
	fs.SetOutput(w)
	fs.PrintDefaults()
	fs.SetOutput(io.Discard)
}

// Budget checks a -max-dofs value against [MinDOFs, MaxDOFs].
func Budget(n int) error {
	if n < MinDOFs || n > MaxDOFs {
		return fmt.Errorf("-max-dofs %d: want %d to %d", n, MinDOFs, MaxDOFs)
	}
	return nil
}

// BudgetHelp is the text of the -max-dofs flag's range, for flag usage.
var BudgetHelp = fmt.Sprintf("DOF budget, %d to %d", MinDOFs, MaxDOFs)

// CheckOut makes the output folder dir (with its parents) and checks that
// a file can be created in it, so that a run fails before its
// computation, not after, when its results cannot be written. It leaves
// no file behind.
func CheckOut(dir string) error {
	if strings.TrimSpace(dir) == "" {
		return errors.New("-out: empty folder name")
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("-out %s: %w", dir, err)
	}
	f, err := os.CreateTemp(dir, ".probe-*")
	if err != nil {
		return fmt.Errorf("-out %s: cannot write there: %w", dir, err)
	}
	name := f.Name()
	f.Close()
	if err := os.Remove(name); err != nil {
		return fmt.Errorf("-out %s: %w", filepath.Base(name), err)
	}
	return nil
}
