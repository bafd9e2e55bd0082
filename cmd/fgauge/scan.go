package main

import (
	"context"
	"errors"

	"fgauge/vcfscan"
)

// runColumns prints one line per output column.
func runColumns(ctx context.Context, env *runEnv, args []string) error {
	return nil
}

// isInputError reports whether err is a problem with the input files
// rather than a bug.
func isInputError(err error) bool {
	var pe *vcfscan.ParseError
	return errors.As(err, &pe)
}
