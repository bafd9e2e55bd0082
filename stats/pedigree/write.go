package pedigree

import (
	"bufio"
	"io"
	"sort"
	"strconv"

	"fgauge/internal/numfmt"
)

// WriteInbreeding writes id sire dam f_pedigree in input order, with
// parent-only founders (no input line) first.
func WriteInbreeding(w io.Writer, ped *Pedigree, f []float64) error {
	order := make([]int, ped.Len())
	for i := range order {
		order[i] = i
	}
	sort.SliceStable(order, func(a, b int) bool { return ped.Line(order[a]) < ped.Line(order[b]) })
	bw := bufio.NewWriterSize(w, 1<<16)
	bw.WriteString("id\tsire\tdam\tf_pedigree\n")
	var b []byte
	for _, i := range order {
		b = append(b[:0], ped.ID(i)...)
		b = append(b, '\t')
		b = appendParent(b, ped, ped.Sire(i))
		b = append(b, '\t')
		b = appendParent(b, ped, ped.Dam(i))
		b = append(b, '\t')
		b = strconv.AppendFloat(b, f[i], 'g', -1, 64)
		b = append(b, '\n')
		if _, err := bw.Write(b); err != nil {
			return err
		}
	}
	return bw.Flush()
}

func appendParent(b []byte, ped *Pedigree, j int) []byte {
	if j < 0 {
		return append(b, numfmt.NA...)
	}
	return append(b, ped.ID(j)...)
}
