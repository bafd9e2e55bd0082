package main

import (
	"fgauge/cmd/fgauge/internal/badinput"
	"flag"
	"fmt"
	"io"
	"strings"
)

// listFlag is a repeatable string option.
type listFlag []string

func (l *listFlag) String() string     { return strings.Join(*l, ",") }
func (l *listFlag) Set(v string) error { *l = append(*l, v); return nil }

// parseInterleaved parses flags that may come before or after positional
// arguments ("fgauge scan IN.vcf -o OUT" as well as "fgauge scan -o OUT IN.vcf")
// and returns the positional arguments.
func parseInterleaved(fs *flag.FlagSet, args []string) ([]string, error) {
	var pos []string
	for {
		if err := fs.Parse(args); err != nil {
			if err == flag.ErrHelp {
				return nil, errHelp
			}
			return nil, badinput.Wrap(err)
		}
		args = fs.Args()
		if len(args) == 0 {
			return pos, nil
		}
		pos = append(pos, args[0])
		args = args[1:]
	}
}

// newFlagSet makes a FlagSet whose --help prints the synopsis, the
// options and the extra help text to w.
func newFlagSet(w io.Writer, name, synopsis, extra string) *flag.FlagSet {
	fs := flag.NewFlagSet(name, flag.ContinueOnError)
	fs.SetOutput(w)
	fs.Usage = func() {
		fmt.Fprintf(w, "Usage: fgauge %s\n\nOptions (one or two leading dashes):\n", synopsis)
		fs.PrintDefaults()
		if extra != "" {
			fmt.Fprintln(w)
			fmt.Fprint(w, extra)
		}
		fmt.Fprint(w, exitCodeHelp)
	}
	return fs
}
