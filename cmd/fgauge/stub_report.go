package main

import "context"

// runReport is a placeholder until the report command is built; this file is
// deleted when it is.
func runReport(ctx context.Context, env *runEnv, args []string) error {
	return usagef("report: not built yet")
}
