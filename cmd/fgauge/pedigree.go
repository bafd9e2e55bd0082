package main

import (
	"bufio"
	"context"
	"errors"
	"fmt"
	"io"
	"os"
	"strconv"
	"strings"

	"fgauge/stats/pedigree"
	"fgauge/vcfscan"
)

const pedigreeHelp = `Input: a table with columns id, sire, dam and an optional sex (M/F);
0, NA, . or an empty field mean an unknown parent. A header line is
optional. Offspring may come before their parents; animals named only as
parents are added as founders. An animal that is its own ancestor, or an
id listed twice, is an error naming the line.

Output (TSV): id sire dam f_pedigree, in input order with parent-only
founders first. f_pedigree is the inbreeding coefficient by Meuwissen &
Luo (1992); founders and animals with an unknown parent have 0.
With --pairs: a second table id_a id_b coancestry, the coefficient of
coancestry (kinship) of each pair, i.e. the F an offspring of the pair
would have.

Pedigree F is an expectation from recorded parentage. It depends on how
complete and how correct the records are, and is not by itself a reason to
mate or cull an animal: such decisions follow the breeding programme's
rules, veterinary advice and local regulations.
`

// runPedigree computes pedigree inbreeding and optional pair coancestries.
func runPedigree(ctx context.Context, env *runEnv, args []string) error {
	fs := newFlagSet(env.stderr, "pedigree", "pedigree [options] PEDIGREE.tsv", pedigreeHelp)
	out := fs.String("o", "", "write the table to `FILE` instead of standard output")
	pairsIn := fs.String("pairs", "", "`FILE` of id pairs (two ids a line) whose coancestry to compute")
	pairsOut := fs.String("pairs-out", "", "write the coancestry table to `FILE` (default: next to -o, named *_coancestry.tsv)")
	pos, err := parseInterleaved(fs, args)
	if err != nil {
		return err
	}
	if len(pos) != 1 {
		return usagef("pedigree: want one PEDIGREE file, got %d (run 'fgauge pedigree --help')", len(pos))
	}
	if *pairsIn != "" && *pairsOut == "" {
		if *out == "" {
			return usagef("pedigree: --pairs needs -o or --pairs-out to know where to write coancestries")
		}
		*pairsOut = strings.TrimSuffix(*out, ".tsv") + "_coancestry.tsv"
	}
	ped, err := readPedigreeFile(pos[0])
	if err != nil {
		return err
	}
	if err := ctx.Err(); err != nil {
		return err
	}
	if c := ped.SexConflicts(); len(c) > 0 {
		for _, msg := range c[:min(5, len(c))] {
			fmt.Fprintln(env.stderr, "fgauge pedigree: warning:", msg)
		}
		if len(c) > 5 {
			fmt.Fprintf(env.stderr, "fgauge pedigree: warning: %d more sex conflicts\n", len(c)-5)
		}
	}
	f := ped.Inbreeding()
	if err := ctx.Err(); err != nil {
		return err
	}
	if err := writeFileOrStdout(env.stdout, *out, func(w io.Writer) error { return pedigree.WriteInbreeding(w, ped, f) }); err != nil {
		return err
	}
	if *pairsIn == "" {
		return nil
	}
	pf, err := vcfscan.OpenText(*pairsIn)
	if err != nil {
		return usagef("pedigree: %v", err)
	}
	defer pf.Close()
	pairs, err := ped.ReadPairs(pf, *pairsIn)
	if err != nil {
		return pedigreeInputError(err)
	}
	co, err := ped.Coancestry(pairs, f)
	if err != nil {
		return err
	}
	return writeFileOrStdout(env.stdout, *pairsOut, func(w io.Writer) error {
		bw := bufio.NewWriter(w)
		bw.WriteString("id_a\tid_b\tcoancestry\n")
		for k, pr := range pairs {
			bw.WriteString(ped.ID(pr[0]))
			bw.WriteByte('\t')
			bw.WriteString(ped.ID(pr[1]))
			bw.WriteByte('\t')
			bw.WriteString(strconv.FormatFloat(co[k], 'g', -1, 64))
			bw.WriteByte('\n')
		}
		return bw.Flush()
	})
}

// readPedigreeFile opens and parses a pedigree table; parse errors are
// reported as input errors (exit code 2).
func readPedigreeFile(path string) (*pedigree.Pedigree, error) {
	f, err := vcfscan.OpenText(path)
	if err != nil {
		return nil, usagef("%v", err)
	}
	defer f.Close()
	ped, err := pedigree.Read(f, path)
	if err != nil {
		return nil, pedigreeInputError(err)
	}
	return ped, nil
}

// pedigreeInputError turns a *pedigree.Error into the input-error type the
// exit-code mapping knows, keeping file, line and the wrapped sentinel.
func pedigreeInputError(err error) error {
	var pe *pedigree.Error
	if !errors.As(err, &pe) {
		return err
	}
	field := ""
	if pe.Msg != "" {
		field = pe.Msg
	}
	// ParseError prints "file:line: field: err"; put the detail after the sentinel.
	return &vcfscan.ParseError{File: pe.File, Line: int64(pe.Line), Offset: -1, Record: -1,
		Err: fmt.Errorf("%w: %s", pe.Err, field)}
}

// writeFileOrStdout runs fn on path, or on stdout when path is "" or "-".
func writeFileOrStdout(stdout io.Writer, path string, fn func(io.Writer) error) (err error) {
	if path == "" || path == "-" {
		return fn(stdout)
	}
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	defer func() {
		if cerr := f.Close(); err == nil {
			err = cerr
		}
	}()
	return fn(f)
}
