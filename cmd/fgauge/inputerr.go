package main

import (
	"bufio"
	"errors"
	"io/fs"

	"fgauge/genmap"
	"fgauge/roh"
	"fgauge/stats"
	"fgauge/stats/pedigree"
	"fgauge/vcfscan"
)

// inputSentinels are the errors, wrapped anywhere in a chain, that mean the
// input files (or the options naming them) are at fault rather than fgauge.
var inputSentinels = []error{
	vcfscan.ErrMalformed, vcfscan.ErrTruncated, vcfscan.ErrChecksum, vcfscan.ErrLimit,
	vcfscan.ErrUnsorted, vcfscan.ErrSampleCount,
	vcfscan.ErrBadRegion, vcfscan.ErrNoIndex, vcfscan.ErrStaleIndex, vcfscan.ErrUnknownContig, vcfscan.ErrUnknownSample,
	stats.ErrBadTable, genmap.ErrMap, roh.ErrConfig,
	roh.ErrTempDisk, roh.ErrPieces, // temporary folder missing, unwritable or full; a damaged pieces file
	pedigree.ErrMalformed, pedigree.ErrDuplicate, pedigree.ErrLoop, pedigree.ErrUnknownID,
	fs.ErrNotExist, fs.ErrPermission,
	bufio.ErrTooLong, // a side file (sample list, ...) with an overlong line
}

// isInputFault reports whether err comes from a bad or unreadable input
// file: exit code 2, not 1. A file that cannot be opened or read
// (*fs.PathError) counts too: it is never a bug in fgauge.
func isInputFault(err error) bool {
	for _, s := range inputSentinels {
		if errors.Is(err, s) {
			return true
		}
	}
	var pe *fs.PathError
	var te *stats.TableError
	var ve *vcfscan.ParseError
	var de *pedigree.Error
	return errors.As(err, &pe) || errors.As(err, &te) || errors.As(err, &ve) || errors.As(err, &de)
}
