package runsummary

import (
	"os"
	"runtime/debug"
)

// Bytes of the heap limit besides the budget: the reader's and the
// statistics' batches and buffers (a base and a share per thread: about
// 100 MB live at 2 threads in a heap profile of 100 samples x 1 M sites,
// plus room for the collector to work) and the per-sample accumulators
// (measured about 2.3 kB per sample at 2 threads: 10,000 against 200
// samples of bench/gen, 3,000 sites; rounded up).
const (
	heapBase      = 160 << 20
	heapPerThread = 16 << 20
	heapPerSample = 4 << 10
	// heapCap bounds the limit above the budget, so that a large cohort
	// (200,000 samples: about 250 MB live in a heap profile) stays under
	// 1 GiB of RSS with the default budget instead of letting the heap
	// grow to budget + 4 KiB per sample of garbage before collecting.
	heapCap = 640 << 20
)

// SetHeapLimit sets the Go runtime's soft memory limit
// (debug.SetMemoryLimit) to the memory budget plus what the rest of a
// scan or merge of that many samples and threads holds, so that the
// garbage collector reclaims windows of sites that went to temporary disk
// before the heap doubles (the runtime's default); the part above the
// budget is at most heapCap (640 MiB). It leaves a limit
// given in the GOMEMLIMIT environment variable alone. It returns the
// limit in force, or -1 when none was set here.
func SetHeapLimit(budget int64, samples, threads int) int64 {
	if os.Getenv("GOMEMLIMIT") != "" {
		return -1
	}
	limit := budget + min(heapBase+int64(threads)*heapPerThread+int64(samples)*heapPerSample, heapCap)
	debug.SetMemoryLimit(limit)
	return limit
}
