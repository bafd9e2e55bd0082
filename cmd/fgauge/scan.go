package main

import (
	"errors"

	"fgauge/vcfscan"
)

// isInputError reports whether err is a problem with the input files
// rather than a bug.
func isInputError(err error) bool {
	var pe *vcfscan.ParseError
	return errors.As(err, &pe)
}
