package main

import "context"

// runMerge is a placeholder until the merge command is built; this file is
// deleted when it is.
func runMerge(ctx context.Context, env *runEnv, args []string) error {
	return usagef("merge: not built yet")
}
