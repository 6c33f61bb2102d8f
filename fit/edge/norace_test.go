//go:build !race

package edge_test

// raceEnabled is true when the tests run under the race detector, which
// slows the fits about eightfold: the honesty study then runs its reduced
// replica counts (see honestyCount).
const raceEnabled = false
