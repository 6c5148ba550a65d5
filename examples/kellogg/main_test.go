package main

import (
	"testing"

	"github.com/posteriori-fem/posteriori/examples/internal/scenario"
)

// Small runs write what Verify accepts; bad flags exit 2 and write nothing.
func TestCommand(t *testing.T) { scenario.CheckCommand(t, command().Main) }
