package main

import "context"

// runPedigree is a placeholder until the pedigree command is built; this file is
// deleted when it is.
func runPedigree(ctx context.Context, env *runEnv, args []string) error {
	return usagef("pedigree: not built yet")
}
