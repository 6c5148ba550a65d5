//go:build race

package sparse

// raceEnabled reports whether the race detector is on; it allocates when
// goroutines start, so allocation counts are not checked then.
const raceEnabled = true
