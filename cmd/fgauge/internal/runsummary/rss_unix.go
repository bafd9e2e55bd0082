//go:build unix

package runsummary

import (
	"runtime"
	"syscall"
)

// PeakRSS returns the process's peak resident set size in bytes
// (getrusage ru_maxrss: kilobytes on Linux and most systems, bytes on
// macOS), or -1 when the system does not report it.
func PeakRSS() int64 {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return -1
	}
	if runtime.GOOS == "darwin" || runtime.GOOS == "ios" {
		return int64(ru.Maxrss)
	}
	return int64(ru.Maxrss) * 1024
}
