package main

import "context"

// runPlan is a placeholder until the plan command is built; this file is
// deleted when it is.
func runPlan(ctx context.Context, env *runEnv, args []string) error {
	return usagef("plan: not built yet")
}
