package vcfscan

import (
	"bufio"
	"bytes"
	"compress/gzip"
	"encoding/binary"
	"errors"
	"fmt"
	"hash/crc32"
	"io"
	"os"
	"os/exec"
	"strings"
	"syscall"
	"testing"
	"time"

	"github.com/klauspost/compress/flate"
)

// TestLimitErrors checks each limit against a small input that crosses it:
// the error wraps ErrLimit, names the place and the option that raises it.
func TestLimitErrors(t *testing.T) {
	long := "1\t10\t.\tA\tG\t.\tPASS\tNOTE=" + strings.Repeat("x", 5000) + "\tGT\t0/0\t0/1\t1/1"
	cases := []struct {
		name string
		data []byte
		lim  Limits
		msg  string
	}{
		{"line_in_chunk", mini("1\t5\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1", long), Limits{MaxLineBytes: 4096},
			"mem.vcf:7: line: limit exceeded: line of 5038 bytes is longer than the limit of 4096; raise --guard-line-bytes"},
		{"line_without_newline", append([]byte(miniHeader), strings.Repeat("y", 10000)...), Limits{MaxLineBytes: 4096},
			"mem.vcf:6: line: limit exceeded: line of 10000 bytes is longer than the limit of 4096; raise --guard-line-bytes"},
		{"header_line", []byte("##fileformat=VCFv4.2\n##note=" + strings.Repeat("z", 9000) + "\n"), Limits{MaxLineBytes: 4096},
			"mem.vcf:2: header: limit exceeded: header line longer than 4096 bytes; raise --guard-line-bytes"},
		{"samples", mini("1\t5\t.\tA\tG\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1"), Limits{MaxSamples: 2},
			"mem.vcf:5: #CHROM: limit exceeded: 3 samples, more than the limit of 2; raise --guard-samples"},
		{"alleles", mini("1\t5\t.\tA\tC,G,T\t.\tPASS\t.\tGT\t0/0\t0/1\t1/1"), Limits{MaxAlleles: 3},
			"mem.vcf:6: ALT: limit exceeded: 4 alleles, more than the limit of 3; raise --guard-alleles"},
		{"bgzf_block", bgzfBlockOf(bytes.Repeat([]byte("#"), 70000)), Limits{},
			"block claims 70000 uncompressed bytes, more than the limit of 65536; raise --guard-block-bytes"},
	}
	for _, tc := range cases {
		t.Run(tc.name, func(t *testing.T) {
			_, err := readBytes(t, tc.data, Options{Threads: 2, Limits: tc.lim})
			if !errors.Is(err, ErrLimit) || !strings.Contains(fmt.Sprint(err), tc.msg) {
				t.Fatalf("error %v, want ErrLimit with %q", err, tc.msg)
			}
		})
	}
}

// bgzfBlockOf writes data as one BGZF block (SAM/BAM format specification,
// section 4.1) even when it is larger than the format allows, plus the EOF
// block.
func bgzfBlockOf(data []byte) []byte {
	var c bytes.Buffer
	fw, _ := flate.NewWriter(&c, flate.BestSpeed)
	fw.Write(data)
	fw.Close()
	b := []byte{0x1f, 0x8b, 8, 4, 0, 0, 0, 0, 0, 0xff, 6, 0, 'B', 'C', 2, 0, 0, 0}
	binary.LittleEndian.PutUint16(b[16:], uint16(18+c.Len()+8-1))
	b = append(b, c.Bytes()...)
	b = binary.LittleEndian.AppendUint32(b, crc32.ChecksumIEEE(data))
	b = binary.LittleEndian.AppendUint32(b, uint32(len(data)))
	return append(b, bgzfEOF...)
}

// hostile streams endless input of one kind; the child stops reading at a
// limit and the parent measures the child's peak resident memory.
var hostile = map[string]func(w io.Writer) error{
	// A data line that never ends (1 GiB and more).
	"endless_line": func(w io.Writer) error {
		if _, err := io.WriteString(w, miniHeader+"1\t10\t.\tA\tG\t.\tPASS\tNOTE="); err != nil {
			return err
		}
		return repeat(w, bytes.Repeat([]byte("x"), 1<<16))
	},
	// A #CHROM line naming samples without end: it claims 10^9 samples and more.
	"endless_samples": func(w io.Writer) error {
		if _, err := io.WriteString(w, "##fileformat=VCFv4.2\n#CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO\tFORMAT"); err != nil {
			return err
		}
		return repeat(w, bytes.Repeat([]byte("\ts"), 1<<15))
	},
	// A header of meta lines without end (each stored by the parser).
	"endless_meta_lines": func(w io.Writer) error {
		if _, err := io.WriteString(w, "##fileformat=VCFv4.2\n"); err != nil {
			return err
		}
		return repeat(w, bytes.Repeat([]byte("##a=b\n"), 1<<13))
	},
	// A BGZF-compressed BCF whose header claims 60 MB of text (under the
	// limit) and delivers meta lines without end.
	"bcf_header_bomb": func(w io.Writer) error {
		bw := NewBGZFWriter(w, 9)
		pre := []byte("BCF\x02\x02\x00\x00\x00\x00##fileformat=VCFv4.2\n")
		binary.LittleEndian.PutUint32(pre[5:], 60_000_000)
		if _, err := bw.Write(pre); err != nil {
			return err
		}
		return repeat(bw, bytes.Repeat([]byte("##a=b\n"), 1<<13))
	},
	// A gzip bomb: a short gzip stream that inflates to gigabytes of one line.
	"gzip_bomb": func(w io.Writer) error {
		zw, _ := gzip.NewWriterLevel(w, gzip.BestCompression)
		if _, err := io.WriteString(zw, miniHeader+"1\t10\t.\tA\tG\t.\tPASS\tNOTE="); err != nil {
			return err
		}
		return repeat(zw, make([]byte, 1<<16))
	},
	// The same as BGZF: each 28-byte-ish block inflates to 64 KiB.
	"bgzf_bomb": func(w io.Writer) error {
		bw := NewBGZFWriter(w, 9)
		if _, err := io.WriteString(bw, miniHeader+"1\t10\t.\tA\tG\t.\tPASS\tNOTE="); err != nil {
			return err
		}
		return repeat(bw, make([]byte, 1<<16))
	},
}

// repeat writes block to w until the reader goes away (or 4 GiB).
func repeat(w io.Writer, block []byte) error {
	for n := 0; n < 1<<16; n++ {
		if _, err := w.Write(block); err != nil {
			return err
		}
	}
	return nil
}

// TestHostileInputMemory runs the reader in a child process on endless
// hostile input fed through a pipe, with default limits, and checks that
// it is refused with ErrLimit while the child's peak resident set
// (getrusage ru_maxrss) stays under 200 MB.
func TestHostileInputMemory(t *testing.T) {
	if os.Getenv("FGAUGE_HOSTILE_CHILD") != "" {
		return // the child runs TestHostileChild
	}
	if raceEnabled {
		t.Skip("memory is not representative under the race detector (and the byte loops run 30 times slower); TestLimitErrors covers the refusals")
	}
	for _, name := range []string{"endless_line", "endless_samples", "endless_meta_lines", "bcf_header_bomb", "gzip_bomb", "bgzf_bomb"} {
		t.Run(name, func(t *testing.T) {
			cmd := exec.Command(os.Args[0], "-test.run=^TestHostileChild$", "-test.count=1")
			cmd.Env = append(os.Environ(), "FGAUGE_HOSTILE_CHILD="+name, "GOMAXPROCS=2")
			in, err := cmd.StdinPipe()
			if err != nil {
				t.Fatal(err)
			}
			var out bytes.Buffer
			cmd.Stdout, cmd.Stderr = &out, &out
			start := time.Now()
			if err := cmd.Start(); err != nil {
				t.Fatal(err)
			}
			go func() {
				bw := bufio.NewWriterSize(in, 1<<16)
				hostile[name](bw)
				bw.Flush()
				in.Close()
			}()
			err = cmd.Wait()
			took := time.Since(start)
			if err != nil {
				t.Fatalf("child: %v\n%s", err, out.String())
			}
			ru := cmd.ProcessState.SysUsage().(*syscall.Rusage)
			peak := ru.Maxrss << 10 // kilobytes on Linux
			t.Logf("%s: peak RSS %.1f MB in %v; %s", name, float64(peak)/1e6, took.Round(time.Millisecond), strings.TrimSpace(out.String()))
			if !strings.Contains(out.String(), "REFUSED") || !strings.Contains(out.String(), "limit exceeded") {
				t.Errorf("not refused with a limit error:\n%s", out.String())
			}
			if peak > 200e6 {
				t.Errorf("peak RSS %.1f MB, want under 200 MB", float64(peak)/1e6)
			}
		})
	}
}

// TestHostileChild is the child side of TestHostileInputMemory: it reads
// standard input with default options and reports how reading ended.
func TestHostileChild(t *testing.T) {
	if os.Getenv("FGAUGE_HOSTILE_CHILD") == "" {
		t.Skip("child process of TestHostileInputMemory")
	}
	r, err := Open("-", Options{Threads: 2})
	for err == nil {
		var b *Batch
		if b, err = r.Next(); err == nil {
			r.Release(b)
		}
	}
	if errors.Is(err, ErrLimit) {
		fmt.Println("REFUSED:", err)
	} else {
		fmt.Println("ended:", err)
	}
	os.Stdout.Sync()
	os.Exit(0) // do not wait for the endless writer
}
