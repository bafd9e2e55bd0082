package main

import "context"

// runDemo is a placeholder until the demo command is built; this file is
// deleted when it is.
func runDemo(ctx context.Context, env *runEnv, args []string) error {
	return usagef("demo: not built yet")
}
