//go:build !race

package vcfscan

// raceEnabled is set when the tests run under the race detector, which
// multiplies memory use.
const raceEnabled = false
