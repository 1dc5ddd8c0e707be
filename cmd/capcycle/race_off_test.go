//go:build !race

package main

// raceEnabled reports whether the tests run under the race detector, which makes the
// recording demo several times slower.
const raceEnabled = false
