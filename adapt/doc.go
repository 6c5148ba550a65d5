// Package adapt will hold the marking strategies (Dörfler, maximum, fixed
// fraction) and the solve–estimate–mark–refine loop that a caller drives
// from a Go program, with this library's solver or their own. It holds only
// its documentation until those are written.
package adapt
