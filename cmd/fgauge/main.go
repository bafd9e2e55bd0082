// Command fgauge measures inbreeding in genotyped cohorts from VCF or BCF
// files: per-sample genomic F, runs of homozygosity, per-site
// Hardy-Weinberg tests and population F-statistics.
//
// This package is the shell only: it parses flags into the config structs
// of the packages under cmd/fgauge/internal (scanrun, shard, plan, demo),
// prints help, draws the progress bar and maps errors to exit codes. The
// work itself is in those packages and in vcfscan, stats and roh.
package main

import (
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"os/signal"
	"sort"
	"syscall"

	"fgauge/cmd/fgauge/internal/badinput"
)

// version is stamped into run.json and shard states.
const version = "0.1.0"

// Exit codes, documented in --help and the README.
const (
	exitOK          = 0
	exitInternal    = 1
	exitBadInput    = 2
	exitInterrupted = 130
)

// command is one subcommand of fgauge.
type command struct {
	summary string
	run     func(ctx context.Context, env *runEnv, args []string) error
}

// runEnv carries what a subcommand may touch besides its arguments.
type runEnv struct {
	stdout, stderr io.Writer
	stdin          io.Reader
	argv           []string // the whole command line, for run.json
}

func commands() map[string]command {
	return map[string]command{
		"scan":     {"read a VCF/BCF and write per-site, per-sample and per-run tables", runScan},
		"simulate": {"drop genomes through a pedigree and write a VCF with its truth", runSimulate},
		"pedigree": {"pedigree inbreeding coefficients and coancestries", runPedigree},
		"demo":     {"simulate the built-in demo cohort and scan it", runDemo},
		"report":   {"write a self-contained HTML report for a scan's output folder", runReport},
		"merge":    {"combine shard states into the outputs of a single pass", runMerge},
		"plan":     {"split an indexed input into shards and write batch scripts", runPlan},
		"columns":  {"explain every output column in one line", runColumns},
		"mate":     {"coancestry of sire x dam pairs and the mating plan with the lowest progeny F", runMate},
	}
}

func main() {
	ctx, stop := signal.NotifyContext(context.Background(), os.Interrupt, syscall.SIGTERM)
	env := &runEnv{stdout: os.Stdout, stderr: os.Stderr, stdin: os.Stdin, argv: os.Args}
	code := run(ctx, env, os.Args[1:])
	stop()
	os.Exit(code)
}

// run executes one command line and returns the process exit code.
func run(ctx context.Context, env *runEnv, args []string) int {
	cmds := commands()
	if len(args) == 0 || args[0] == "-h" || args[0] == "--help" || args[0] == "help" {
		usage(env.stderr, cmds)
		if len(args) == 0 {
			return exitBadInput
		}
		return exitOK
	}
	if args[0] == "version" || args[0] == "--version" {
		fmt.Fprintln(env.stdout, "fgauge", version)
		return exitOK
	}
	c, ok := cmds[args[0]]
	if !ok {
		fmt.Fprintf(env.stderr, "fgauge: unknown command %q (run 'fgauge --help' for the list)\n", args[0])
		return exitBadInput
	}
	err := c.run(ctx, env, args[1:])
	return exitCode(env.stderr, ctx, err)
}

// exitCode prints err and maps it to an exit code.
func exitCode(w io.Writer, ctx context.Context, err error) int {
	switch {
	case err == nil:
		return exitOK
	case errors.Is(err, errHelp):
		return exitOK
	case ctx.Err() != nil || errors.Is(err, context.Canceled):
		fmt.Fprintln(w, "fgauge: interrupted; temporary files removed")
		return exitInterrupted
	}
	fmt.Fprintln(w, "fgauge:", err)
	var ue *usageError
	if errors.As(err, &ue) || isInputError(err) || isInputFault(err) {
		return exitBadInput
	}
	return exitInternal
}

func usage(w io.Writer, cmds map[string]command) {
	fmt.Fprintln(w, "fgauge measures inbreeding in genotyped cohorts (VCF/BCF).")
	fmt.Fprintln(w, "\nUsage: fgauge COMMAND [options] [arguments]\n\nCommands:")
	names := make([]string, 0, len(cmds))
	for n := range cmds {
		names = append(names, n)
	}
	sort.Strings(names)
	for _, n := range names {
		fmt.Fprintf(w, "  %-9s %s\n", n, cmds[n].summary)
	}
	fmt.Fprintln(w, "\nRun 'fgauge COMMAND --help' for a command's options.")
	fmt.Fprint(w, exitCodeHelp)
}

const exitCodeHelp = `
Exit codes:
  0    success
  1    internal error (a bug: please report it with the command line)
  2    bad usage or bad input (the message names the file and place)
  130  interrupted by SIGINT or SIGTERM (temporary files are removed)
`

// errHelp is returned when --help was asked for and printed.
var errHelp = errors.New("help shown")

// usageError is a mistake in the command line or a bad input file
// (exit code 2); packages under internal/ report the same type.
type usageError = badinput.Error

func usagef(format string, a ...any) error { return badinput.Errorf(format, a...) }
