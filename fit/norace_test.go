//go:build !race

package fit

// raceEnabled is true when the tests run under the race detector, whose
// instrumentation changes allocation counts.
const raceEnabled = false
