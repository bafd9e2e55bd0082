package vcfscan

import (
	"bytes"
	"errors"
	"fmt"
	"math/rand/v2"
	"reflect"
	"strings"
	"testing"
)

// directText is a VCF with nSamples samples and nRec records of random
// calls (invented; for the chunker only).
func directText(rng *rand.Rand, nSamples, nRec int, finalNewline bool) []byte {
	var b bytes.Buffer
	b.WriteString("##fileformat=VCFv4.2\n##contig=<ID=1,length=100000000>\n")
	b.WriteString("##FORMAT=<ID=GT,Number=1,Type=String,Description=\"Genotype\">\n")
	b.WriteString("#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT")
	for s := 0; s < nSamples; s++ {
		fmt.Fprintf(&b, "\tS%d", s)
	}
	b.WriteByte('\n')
	gts := []string{"0/0", "0/1", "1/1", "./.", "0|1", "1/."}
	for i := 0; i < nRec; i++ {
		fmt.Fprintf(&b, "1\t%d\t.\tA\tG\t50\tPASS\t.\tGT", 100*(i+1))
		for s := 0; s < nSamples; s++ {
			b.WriteByte('\t')
			b.WriteString(gts[rng.IntN(len(gts))])
		}
		if i < nRec-1 || finalNewline {
			b.WriteByte('\n')
		}
	}
	return b.Bytes()
}

// TestDirectChunking checks that the chunker that takes inflated BGZF
// blocks in place (chunkLoopDirect, default options) gives the same
// records, calls and line numbers as the copying chunker (small
// chunkBytes) and as the plain text: lines crossing block and job
// boundaries, lines longer than the headroom in front of a job, a last
// line without a newline, and empty BGZF blocks in the middle.
func TestDirectChunking(t *testing.T) {
	rng := rand.New(rand.NewPCG(7, 8))
	cases := []struct {
		name     string
		text     []byte
		emptyMid bool
	}{
		{"many jobs", directText(rng, 300, 4000, true), false},
		{"lines longer than the headroom", directText(rng, 70000, 12, true), false},
		{"no final newline", directText(rng, 50, 3000, false), false},
		{"empty blocks inside", directText(rng, 200, 3000, true), true},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			data := toBGZF(t, tc.text)
			if tc.emptyMid {
				// Put empty blocks (the EOF block is one) between the
				// first block and the rest.
				var b bytes.Buffer
				raw := data
				xlen := int(raw[10]) | int(raw[11])<<8
				bsize, _ := findBC(raw[12 : 12+xlen])
				b.Write(raw[:bsize+1])
				for k := 0; k < 20; k++ {
					b.Write(bgzfEOF)
				}
				b.Write(raw[bsize+1:])
				data = b.Bytes()
			}
			want, err := readBytes(t, tc.text, Options{Threads: 1})
			if err != nil {
				t.Fatal(err)
			}
			copying, err := readBytes(t, data, Options{Threads: 2, chunkBytes: 1 << 15})
			if err != nil {
				t.Fatal(err)
			}
			for _, threads := range []int{1, 2, 3} {
				direct, err := readBytes(t, data, Options{Threads: threads})
				if err != nil {
					t.Fatal(err)
				}
				for _, got := range []*scanResult{direct, copying} {
					if !reflect.DeepEqual(got.gts, want.gts) || !reflect.DeepEqual(got.lines, want.lines) ||
						!reflect.DeepEqual(got.sites, want.sites) || got.read != want.read {
						t.Fatalf("threads %d: %d calls, %d records, read %d; plain text gives %d, %d, %d",
							threads, len(got.gts), len(got.sites), got.read, len(want.gts), len(want.sites), want.read)
					}
				}
			}
			if len(want.sites) == 0 {
				t.Fatal("no records read")
			}
		})
	}
}

// TestDirectChunkingLineLimit checks that a line longer than
// Limits.MaxLineBytes fails the same way through the direct chunker.
func TestDirectChunkingLineLimit(t *testing.T) {
	rng := rand.New(rand.NewPCG(9, 10))
	text := directText(rng, 10, 3000, true)
	long := "1\t999999\t.\tA\tG\t50\tPASS\t" + strings.Repeat("X", 300000) + "\tGT" + strings.Repeat("\t0/0", 10) + "\n"
	text = append(text, long...)
	_, err := readBytes(t, toBGZF(t, text), Options{Limits: Limits{MaxLineBytes: 200000}})
	if !errors.Is(err, ErrLimit) || !strings.Contains(err.Error(), "--guard-line-bytes") {
		t.Fatalf("got %v, want ErrLimit naming --guard-line-bytes", err)
	}
}
