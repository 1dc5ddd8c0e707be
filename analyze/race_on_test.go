//go:build race

package analyze

// raceEnabled is true when the tests run under the race detector, which slows pure
// arithmetic some tenfold and adds nothing to it: the long statistical runs use their
// short length there.
const raceEnabled = true
