//go:build !unix

package outdir

import "os"

// tryLock is a no-op where flock is not available: concurrent runs into
// one folder are not detected there.
func tryLock(*os.File) (bool, error) { return true, nil }
