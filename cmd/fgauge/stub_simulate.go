package main

import "context"

// runSimulate is a placeholder until the simulate command is built; this file is
// deleted when it is.
func runSimulate(ctx context.Context, env *runEnv, args []string) error {
	return usagef("simulate: not built yet")
}
