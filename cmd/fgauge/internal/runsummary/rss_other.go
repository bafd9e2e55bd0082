//go:build !unix

package runsummary

// PeakRSS returns -1: this system does not report the peak resident set
// size through getrusage.
func PeakRSS() int64 { return -1 }
