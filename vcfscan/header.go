package vcfscan

import (
	"bufio"
	"bytes"
	"fmt"
	"io"
	"strconv"
	"strings"
)

// headerLineCost approximates what each kept header line costs in memory
// besides its text (string and slice headers, map entries).
const headerLineCost = 64

// mandatory columns of the #CHROM line (VCF 4.x specification, section 1.5).
var fixedColumns = []string{"#CHROM", "POS", "ID", "REF", "ALT", "QUAL", "FILTER", "INFO"}

// headerReader reads the text header of a VCF from br.
type headerReader struct {
	name    string
	br      *bufio.Reader
	line    int64
	maxLine int
	long    []byte
}

// readLine returns the next line without its terminator, or io.EOF. The
// slice is valid until the next call.
func (h *headerReader) readLine() ([]byte, error) {
	h.long = h.long[:0]
	for {
		frag, err := h.br.ReadSlice('\n')
		if err == bufio.ErrBufferFull {
			if len(h.long)+len(frag) > h.maxLine {
				return nil, &ParseError{File: h.name, Line: h.line + 1, Offset: -1, Record: -1, Field: "header",
					Err: fmt.Errorf("%w: header line longer than %d bytes; raise --guard-line-bytes if the file is genuine", ErrLimit, h.maxLine)}
			}
			h.long = appendCapped(h.long, frag, h.maxLine+1)
			continue
		}
		if len(h.long) > 0 {
			h.long = appendCapped(h.long, frag, h.maxLine+1)
			frag = h.long
		}
		if len(frag) > h.maxLine {
			return nil, &ParseError{File: h.name, Line: h.line + 1, Offset: -1, Record: -1, Field: "header",
				Err: fmt.Errorf("%w: header line longer than %d bytes; raise --guard-line-bytes if the file is genuine", ErrLimit, h.maxLine)}
		}
		if err == io.EOF && len(frag) == 0 {
			return nil, io.EOF
		}
		if err != nil && err != io.EOF {
			return nil, err
		}
		h.line++
		frag = bytes.TrimSuffix(frag, []byte{'\n'})
		frag = bytes.TrimSuffix(frag, []byte{'\r'})
		return frag, nil
	}
}

func (h *headerReader) errf(sentinel error, field, format string, args ...any) error {
	return &ParseError{File: h.name, Line: h.line, Offset: -1, Record: -1, Field: field,
		Err: fmt.Errorf("%w: %s", sentinel, fmt.Sprintf(format, args...))}
}

// parseTextHeader reads meta lines and the #CHROM line. It returns the
// header and whether the #CHROM line has a FORMAT column.
func parseTextHeader(br *bufio.Reader, name string, lim Limits, warn func(kind, example string)) (*Header, bool, int64, error) {
	h := &headerReader{name: name, br: br, maxLine: lim.MaxLineBytes}
	hdr := &Header{Info: map[string]FieldDef{}, FormatDefs: map[string]FieldDef{}}
	seenContig := map[string]bool{}
	var held int64 // header bytes held in memory, see headerLineCost
	for {
		line, err := h.readLine()
		if err == io.EOF {
			if h.line == 0 {
				return nil, false, 0, &ParseError{File: name, Line: 0, Offset: -1, Record: -1,
					Err: fmt.Errorf("%w: input is empty; expected a VCF header starting with ##fileformat=VCFv4.x", ErrMalformed)}
			}
			return nil, false, 0, h.errf(ErrTruncated, "header", "input ends inside the header, before the #CHROM line; the file is cut short or is not a VCF")
		}
		if err != nil {
			return nil, false, 0, err
		}
		// The header is kept in memory: bound its size, counting a
		// line's bookkeeping too, so that endless short meta lines
		// cannot exhaust memory.
		if held += int64(len(line)) + headerLineCost; held > int64(lim.MaxLineBytes) {
			return nil, false, 0, h.errf(ErrLimit, "header", "header of %d lines holds more than %d bytes (lines count %d bytes each besides their text); raise --guard-line-bytes, which also bounds the header, if the file is genuine", h.line, lim.MaxLineBytes, headerLineCost)
		}
		if h.line == 1 && !bytes.HasPrefix(line, []byte("##fileformat=")) {
			if !bytes.HasPrefix(line, []byte("#CHROM")) {
				return nil, false, 0, h.errf(ErrMalformed, "header", "expected ##fileformat=VCFv4.x on the first line, found %q; the input is not a VCF", clip(line))
			}
			warn("no_fileformat_line", name+":1")
		}
		if bytes.HasPrefix(line, []byte("##")) {
			meta := string(line[2:])
			hdr.Meta = append(hdr.Meta, meta)
			key, val, _ := strings.Cut(meta, "=")
			switch key {
			case "fileformat":
				hdr.FileFormat = val
				if !strings.HasPrefix(val, "VCFv4") {
					warn("unknown_fileformat", fmt.Sprintf("%s:%d: %s", name, h.line, val))
				}
			case "contig":
				kv := parseAngle(val)
				id := kv["ID"]
				if id == "" {
					return nil, false, 0, h.errf(ErrMalformed, "##contig", "contig line without ID=, found %q", clip(line))
				}
				if seenContig[id] {
					return nil, false, 0, h.errf(ErrMalformed, "##contig", "contig %q is declared twice", id)
				}
				seenContig[id] = true
				c := Contig{Name: id}
				if l, ok := kv["length"]; ok {
					n, err := strconv.ParseInt(l, 10, 64)
					if err != nil || n < 0 {
						return nil, false, 0, h.errf(ErrMalformed, "##contig", "contig %q has length %q; expected a non-negative integer", id, l)
					}
					c.Length = n
				} else {
					warn("contig_without_length", fmt.Sprintf("%s:%d: %s", name, h.line, id))
				}
				hdr.Contigs = append(hdr.Contigs, c)
			case "INFO", "FORMAT":
				kv := parseAngle(val)
				d := FieldDef{ID: kv["ID"], Number: kv["Number"], Type: kv["Type"], Description: kv["Description"]}
				if d.ID == "" {
					return nil, false, 0, h.errf(ErrMalformed, "##"+key, "definition without ID=, found %q", clip(line))
				}
				if key == "INFO" {
					hdr.Info[d.ID] = d
				} else {
					hdr.FormatDefs[d.ID] = d
				}
			}
			continue
		}
		if !bytes.HasPrefix(line, []byte("#CHROM")) {
			if len(line) > 0 && line[0] == '#' {
				return nil, false, 0, h.errf(ErrMalformed, "header", "expected a ## meta line or the #CHROM line, found %q", clip(line))
			}
			return nil, false, 0, h.errf(ErrMalformed, "header", "data line before the #CHROM line; the header must end with #CHROM\tPOS\tID\tREF\tALT\tQUAL\tFILTER\tINFO")
		}
		// Count before splitting: a hostile line claiming millions of
		// samples must not cost a string header per claimed sample.
		if n := bytes.Count(line, []byte{'\t'}) - 8; n > lim.MaxSamples {
			return nil, false, 0, h.errf(ErrLimit, "#CHROM", "%d samples, more than the limit of %d; raise --guard-samples if the file is genuine", n, lim.MaxSamples)
		}
		cols := strings.Split(string(line), "\t")
		if len(cols) < len(fixedColumns) {
			return nil, false, 0, h.errf(ErrMalformed, "#CHROM", "expected at least the 8 tab-separated columns %s, found %d columns; are the columns separated by spaces?", strings.Join(fixedColumns, " "), len(cols))
		}
		for i, want := range fixedColumns {
			if cols[i] != want {
				return nil, false, 0, h.errf(ErrMalformed, "#CHROM", "column %d is %q, expected %q", i+1, cols[i], want)
			}
		}
		hasFormat := len(cols) > 8
		if hasFormat && cols[8] != "FORMAT" {
			return nil, false, 0, h.errf(ErrMalformed, "#CHROM", "column 9 is %q, expected FORMAT before the sample names", cols[8])
		}
		if hasFormat {
			samples := cols[9:]
			if len(samples) > lim.MaxSamples {
				return nil, false, 0, h.errf(ErrLimit, "#CHROM", "%d samples, more than the limit of %d; raise --guard-samples if the file is genuine", len(samples), lim.MaxSamples)
			}
			seen := make(map[string]int, len(samples))
			for i, s := range samples {
				if s == "" {
					return nil, false, 0, h.errf(ErrMalformed, "#CHROM", "sample column %d has an empty name (a stray tab at the end of the line?)", i+1)
				}
				if j, dup := seen[s]; dup {
					return nil, false, 0, h.errf(ErrMalformed, "#CHROM", "sample name %q appears in columns %d and %d; sample names must be unique", s, j+10, i+10)
				}
				seen[s] = i
			}
			hdr.Samples = samples
		}
		return hdr, hasFormat, h.line, nil
	}
}

// appendCapped appends src to dst, doubling the capacity but stepping
// straight to limit when the next doubling would pass it, so that a line
// growing towards the limit costs about 1.5 times the limit at most.
func appendCapped(dst, src []byte, limit int) []byte {
	if need := len(dst) + len(src); need > cap(dst) {
		nc := max(2*cap(dst), need)
		if 2*nc > limit {
			nc = max(limit, need)
		}
		nd := make([]byte, len(dst), nc)
		copy(nd, dst)
		dst = nd
	}
	return append(dst, src...)
}

// parseAngle parses "<K=V,K2="quoted, text",...>" into a map.
func parseAngle(s string) map[string]string {
	m := map[string]string{}
	s = strings.TrimSpace(s)
	if !strings.HasPrefix(s, "<") {
		return m
	}
	s = strings.TrimSuffix(s[1:], ">")
	for len(s) > 0 {
		eq := strings.IndexByte(s, '=')
		if eq < 0 {
			break
		}
		key := strings.TrimSpace(s[:eq])
		s = s[eq+1:]
		var val string
		if strings.HasPrefix(s, "\"") {
			var b strings.Builder
			i := 1
			for ; i < len(s); i++ {
				if s[i] == '\\' && i+1 < len(s) {
					i++
					b.WriteByte(s[i])
					continue
				}
				if s[i] == '"' {
					break
				}
				b.WriteByte(s[i])
			}
			val = b.String()
			s = s[min(i+1, len(s)):]
			if c := strings.IndexByte(s, ','); c >= 0 {
				s = s[c+1:]
			} else {
				s = ""
			}
		} else {
			c := strings.IndexByte(s, ',')
			if c < 0 {
				val, s = s, ""
			} else {
				val, s = s[:c], s[c+1:]
			}
		}
		m[key] = val
	}
	return m
}

// clip shortens b for an error message.
func clip(b []byte) string {
	if len(b) > 60 {
		return string(b[:60]) + "..."
	}
	return string(b)
}
