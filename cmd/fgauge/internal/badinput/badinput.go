// Package badinput marks errors that are the user's to fix (a mistake in
// the command line, or an input file that is missing, unreadable or not
// what it should be) rather than a bug in fgauge. The command maps them to
// exit code 2; every other error is exit code 1.
//
// It is for the packages under cmd/fgauge/internal, which report such
// problems without knowing about exit codes. It is not for library
// packages: vcfscan, stats and roh have their own typed errors and
// sentinels, which the command recognises directly.
package badinput

import "fmt"

// Error is a problem with the command line or an input file; its message
// is shown to the user as is. Err, when set, is the sentinel or cause it
// wraps (for errors.Is).
type Error struct {
	Msg string
	Err error
}

func (e *Error) Error() string { return e.Msg }

// Unwrap returns the wrapped error, if any.
func (e *Error) Unwrap() error { return e.Err }

// Errorf formats a bad-input error.
func Errorf(format string, a ...any) error { return &Error{Msg: fmt.Sprintf(format, a...)} }

// Wrap returns err's message as a bad-input error (nil for nil).
func Wrap(err error) error {
	if err == nil {
		return nil
	}
	return &Error{Msg: err.Error(), Err: err}
}
