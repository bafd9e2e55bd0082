package vcfscan

import (
	"errors"
	"fmt"
)

// Sentinel errors wrapped by ParseError; test with errors.Is.
var (
	ErrMalformed   = errors.New("malformed input")
	ErrTruncated   = errors.New("truncated input")
	ErrChecksum    = errors.New("checksum mismatch")
	ErrLimit       = errors.New("limit exceeded")
	ErrUnsorted    = errors.New("records out of order")
	ErrSampleCount = errors.New("wrong number of sample columns")
	// ErrUnknownSample: a sample asked for by name is not in the file.
	ErrUnknownSample = errors.New("unknown sample")
)

// ParseError locates a problem in an input file.
type ParseError struct {
	File   string
	Line   int64 // 1-based text line, 0 when unknown
	Offset int64 // BGZF virtual offset, -1 when unknown
	Record int64 // BCF record index, -1 when unknown
	Field  string
	Err    error
}

func (e *ParseError) Error() string {
	s := e.File
	switch {
	case e.Line > 0:
		s += fmt.Sprintf(":%d", e.Line)
	case e.Record >= 0:
		s += fmt.Sprintf(": record %d", e.Record)
	}
	if e.Offset >= 0 {
		s += fmt.Sprintf(" (virtual offset %d)", e.Offset)
	}
	if e.Field != "" {
		s += ": " + e.Field
	}
	return s + ": " + e.Err.Error()
}

func (e *ParseError) Unwrap() error { return e.Err }
