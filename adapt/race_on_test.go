//go:build race

package adapt

// raceEnabled reports whether the race detector is on. It slows the loop
// about tenfold, so the long scenarios run with smaller budgets then.
const raceEnabled = true
