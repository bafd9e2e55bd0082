package vcfscan

import (
	"bufio"
	"bytes"
	"encoding/binary"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// BCF 2.2 binary variant calls (hts-specs VCFv4.3 / BCFv2_2, section 6
// "BCF specification"). A BCF file is BGZF-compressed (or, rarely, plain)
// and holds:
//
//	magic "BCF\2\2", uint32 l_text, header text (NUL-terminated VCF header)
//	records: uint32 l_shared, uint32 l_indiv, shared bytes, individual bytes
//
// Strings in records are not spelled out: CHROM is an index into the contig
// dictionary, FILTER/INFO/FORMAT keys are indices into the dictionary of
// strings. Both dictionaries are built from the header text (section 6.2.1):
// the dictionary of strings holds PASS at 0, then each FILTER, INFO and
// FORMAT ID in header order (an ID defined twice, like DP in INFO and
// FORMAT, takes one slot); the contig dictionary holds the ##contig IDs in
// header order. An IDX=n attribute on a line overrides its position.

// Seam with the reader (binsource.go): readBCFHeader, then for each record
// readBCFRecord and bcfDecoder.decode (wrap readBCFRecord's errors with
// bcfDecoder.frameError to give them the record's virtual offset);
// regionChunks (region.go) gives the chunks to read for Options.Regions.
// bcf_twin_test.go and region_query_test.go test the whole path via Open.

const (
	bcfMagic22      = "BCF\x02\x02"
	bcfMaxHeaderLen = 256 << 20 // default limit on l_text
)

// Typed-value type codes (BCF 2.2 section 6.3.3).
const (
	bcfTypeNull  = 0
	bcfTypeInt8  = 1
	bcfTypeInt16 = 2
	bcfTypeInt32 = 3
	bcfTypeFloat = 5
	bcfTypeChar  = 7
)

// Integer sentinels after widening to int32: every width's "missing" and
// "end of vector" values (0x80/0x81, 0x8000/0x8001, 0x80000000/0x80000001)
// map to these two.
const (
	bcfIntMissing   = math.MinInt32
	bcfIntVectorEnd = math.MinInt32 + 1
)

// Float sentinels (bit patterns of quiet NaNs).
const (
	bcfFloatMissing   = 0x7F800001
	bcfFloatVectorEnd = 0x7F800002
)

// readBCFHeader reads the magic, the header length and the header text of a
// BCF stream and returns the parsed header; r must be positioned at the
// magic. name is used in errors, lim and warn are passed to the VCF header
// parser (zero limits take defaults, warn may be nil). The dictionaries
// needed to decode records are rebuilt from h.Meta by newBCFDecoder.
func readBCFHeader(r io.Reader, name string, lim Limits, warn func(kind, example string)) (*Header, error) {
	var pre [9]byte
	if n, err := io.ReadFull(r, pre[:]); err != nil {
		if n >= 5 && string(pre[:5]) != bcfMagic22 {
			return nil, bcfMagicError(name, pre[:n])
		}
		return nil, &ParseError{File: name, Offset: -1, Record: -1, Field: "BCF header",
			Err: fmt.Errorf("%w: file ends within the first %d bytes", ErrTruncated, n)}
	}
	if string(pre[:5]) != bcfMagic22 {
		return nil, bcfMagicError(name, pre[:5])
	}
	lText := binary.LittleEndian.Uint32(pre[5:9])
	if lText > bcfMaxHeaderLen {
		return nil, &ParseError{File: name, Offset: -1, Record: -1, Field: "BCF header",
			Err: fmt.Errorf("%w: header length %d bytes is over the %d limit", ErrLimit, lText, bcfMaxHeaderLen)}
	}
	if lim.MaxLineBytes > 0 && int64(lText) > int64(lim.MaxLineBytes) {
		return nil, &ParseError{File: name, Offset: -1, Record: -1, Field: "BCF header",
			Err: fmt.Errorf("%w: header length %d bytes is over the %d limit; raise --guard-line-bytes, which also bounds the header, if the file is genuine", ErrLimit, lText, lim.MaxLineBytes)}
	}
	// Read through a LimitReader into a buffer of the claimed size, now
	// bounded by --guard-line-bytes: pages a lying length on a short file
	// never fills are not touched, and a genuine header is not copied
	// while the buffer grows.
	var buf bytes.Buffer
	buf.Grow(int(lText) + bytes.MinRead)
	n, err := buf.ReadFrom(io.LimitReader(r, int64(lText)))
	if err != nil {
		return nil, &ParseError{File: name, Offset: -1, Record: -1, Field: "BCF header", Err: err}
	}
	if n != int64(lText) {
		return nil, &ParseError{File: name, Offset: -1, Record: -1, Field: "BCF header",
			Err: fmt.Errorf("%w: header text has %d of %d bytes", ErrTruncated, n, lText)}
	}
	text := buf.Bytes()
	if i := bytes.IndexByte(text, 0); i >= 0 {
		text = text[:i]
	}
	if lim.MaxLineBytes <= 0 {
		lim.MaxLineBytes = DefaultMaxLineBytes
	}
	if lim.MaxSamples <= 0 {
		lim.MaxSamples = DefaultMaxSamples
	}
	if warn == nil {
		warn = func(string, string) {}
	}
	// The text is a VCF header: parse it exactly as the VCF path does.
	h, _, _, err := parseTextHeader(bufio.NewReader(bytes.NewReader(text)), name+" (BCF header text)", lim, warn)
	if err != nil {
		return nil, err
	}
	if _, _, err := bcfDictionaries(h.Meta); err != nil {
		return nil, &ParseError{File: name, Offset: -1, Record: -1, Field: "BCF header",
			Err: fmt.Errorf("%w: %v", ErrMalformed, err)}
	}
	return h, nil
}

func bcfMagicError(name string, got []byte) error {
	err := fmt.Errorf("%w: not BCF 2.2 (first bytes %q)", ErrMalformed, got)
	if len(got) >= 5 && string(got[:3]) == "BCF" {
		err = fmt.Errorf("%w: BCF version %d.%d is not supported, only 2.2", ErrMalformed, got[3], got[4])
	}
	return &ParseError{File: name, Offset: 0, Record: -1, Field: "BCF magic", Err: err}
}

// bcfStructuredMeta splits the value of a structured meta line,
// "<ID=DP,Number=1,Description=\"a, b\">", into its attributes.
func bcfStructuredMeta(v string) (map[string]string, error) {
	if len(v) < 2 || v[0] != '<' || v[len(v)-1] != '>' {
		return nil, fmt.Errorf("value %q is not enclosed in <>", v)
	}
	v = v[1 : len(v)-1]
	out := map[string]string{}
	for len(v) > 0 {
		eq := strings.IndexByte(v, '=')
		if eq < 0 {
			return nil, fmt.Errorf("attribute %q has no '='", v)
		}
		key := v[:eq]
		v = v[eq+1:]
		var val string
		if len(v) > 0 && v[0] == '"' {
			var sb strings.Builder
			i := 1
			for ; i < len(v) && v[i] != '"'; i++ {
				if v[i] == '\\' && i+1 < len(v) {
					i++
				}
				sb.WriteByte(v[i])
			}
			if i >= len(v) {
				return nil, fmt.Errorf("unterminated quote in attribute %s", key)
			}
			val = sb.String()
			v = v[i+1:]
		} else {
			end := strings.IndexByte(v, ',')
			if end < 0 {
				end = len(v)
			}
			val = v[:end]
			v = v[end:]
		}
		out[key] = val
		if len(v) > 0 {
			if v[0] != ',' {
				return nil, fmt.Errorf("expected ',' after attribute %s", key)
			}
			v = v[1:]
		}
	}
	return out, nil
}

// bcfDictionaries rebuilds the dictionary of strings and the contig
// dictionary from the header meta lines (BCF 2.2 section 6.2.1).
func bcfDictionaries(meta []string) (strs, contigs []string, err error) {
	strs = []string{"PASS"}
	seen := map[string]bool{"PASS": true}
	seenContig := map[string]bool{}
	put := func(list []string, idx int, id string) ([]string, error) {
		if idx < 0 || idx > 1<<20 { // bounds what a hostile header can allocate
			return list, fmt.Errorf("IDX=%d out of range for %s", idx, id)
		}
		for len(list) <= idx {
			list = append(list, "")
		}
		if list[idx] != "" && list[idx] != id {
			return list, fmt.Errorf("IDX=%d given to both %s and %s", idx, list[idx], id)
		}
		list[idx] = id
		return list, nil
	}
	for _, m := range meta {
		key, val, _ := strings.Cut(m, "=")
		if key != "FILTER" && key != "INFO" && key != "FORMAT" && key != "contig" {
			continue
		}
		attrs, perr := bcfStructuredMeta(val)
		if perr != nil {
			return nil, nil, fmt.Errorf("##%s: %v", key, perr)
		}
		id := attrs["ID"]
		if id == "" {
			continue
		}
		idx := -1
		if s, ok := attrs["IDX"]; ok {
			n, cerr := strconv.Atoi(s)
			if cerr != nil {
				return nil, nil, fmt.Errorf("##%s ID=%s: bad IDX %q", key, id, s)
			}
			idx = n
		}
		if key == "contig" {
			if seenContig[id] {
				continue
			}
			seenContig[id] = true
			if idx < 0 {
				idx = len(contigs)
			}
			if contigs, err = put(contigs, idx, id); err != nil {
				return nil, nil, err
			}
			continue
		}
		if seen[id] {
			continue
		}
		seen[id] = true
		if idx < 0 {
			idx = len(strs)
		}
		if strs, err = put(strs, idx, id); err != nil {
			return nil, nil, err
		}
	}
	return strs, contigs, nil
}

// readBCFRecord reads one record (its two length words and both parts) from
// r into buf, growing it as needed, and returns the record bytes. It returns
// io.EOF at a clean end of input and ErrTruncated inside a record. maxBytes
// bounds l_shared+l_indiv (0 means 256 MiB).
func readBCFRecord(r io.Reader, buf []byte, maxBytes int) ([]byte, error) {
	if maxBytes <= 0 {
		maxBytes = 256 << 20
	}
	buf = buf[:0]
	if cap(buf) < 8 {
		buf = make([]byte, 8, 512)
	}
	buf = buf[:8]
	n, err := io.ReadFull(r, buf)
	if err != nil {
		if n == 0 && err == io.EOF {
			return buf[:0], io.EOF
		}
		return buf[:0], fmt.Errorf("%w: record length words cut short", ErrTruncated)
	}
	ls := uint64(binary.LittleEndian.Uint32(buf[0:4]))
	li := uint64(binary.LittleEndian.Uint32(buf[4:8]))
	if ls+li > uint64(maxBytes) {
		return buf[:0], fmt.Errorf("%w: record of %d bytes is over the %d limit; raise --guard-line-bytes if the file is genuine", ErrLimit, ls+li, maxBytes)
	}
	total := 8 + int(ls+li)
	// Grow by at most 1 MiB beyond the bytes actually read, so that a
	// lying length on a short input cannot make us allocate its claim.
	for len(buf) < total {
		want := min(total, len(buf)+1<<20)
		if cap(buf) < want {
			nb := make([]byte, len(buf), max(want, 2*cap(buf)))
			copy(nb, buf)
			buf = nb
		}
		n, err := io.ReadFull(r, buf[len(buf):want])
		buf = buf[:len(buf)+n]
		if err != nil {
			return buf[:0], fmt.Errorf("%w: record of %d bytes cut short after %d", ErrTruncated, total, len(buf))
		}
	}
	return buf, nil
}

// bcfDecoder turns BCF records into Batch rows under the same site and
// genotype policy as the VCF text parser (vcf.go), so that a BCF file and
// its VCF twin give identical batches. It holds scratch space: use one per
// goroutine.
type bcfDecoder struct {
	name     string
	opt      Options
	sel      []int // output position -> file sample index
	nSamples int   // sample columns in the file
	strs     []string
	contigs  []string // contig dictionary
	chromMap []int    // contig dictionary index -> Header.Contigs index, -1 if none
	regions  *regionSet
	// st, when set by the caller, receives warnings (haploid and
	// polyploid calls) and the chromosome blocks used for sortedness
	// checks, as vcfParser.st does; record indices stand in for lines.
	st *batchState

	hdr       *Header
	seen, cur int64 // record bytes decoded so far; start of the current record (bcf_offset.go)

	keyGT, keyGQ, keyDP, keyPL, keyGL, keyInfo int // dictionary indices, -1 when absent
	dictErr                                    error
	num                                        [48]byte
	fcache                                     [4096]bcfFloatEntry
}

// bcfFloatEntry caches the float64 value of one float32 bit pattern.
type bcfFloatEntry struct {
	bits    uint32
	val     float64
	ok, set bool
}

// newBCFDecoder prepares a decoder for records of a BCF file with header h
// (from readBCFHeader). sel lists, in output order, the file indices of the
// samples to keep; nil keeps all in file order.
func newBCFDecoder(h *Header, sel []int, opt Options) *bcfDecoder {
	d := &bcfDecoder{name: "", opt: opt, sel: sel, nSamples: len(h.Samples), hdr: h,
		keyGT: -1, keyGQ: -1, keyDP: -1, keyPL: -1, keyGL: -1, keyInfo: -1}
	if d.sel == nil {
		d.sel = make([]int, len(h.Samples))
		for i := range d.sel {
			d.sel[i] = i
		}
	}
	d.strs, d.contigs, d.dictErr = bcfDictionaries(h.Meta)
	byName := make(map[string]int, len(h.Contigs))
	for i, c := range h.Contigs {
		if _, ok := byName[c.Name]; !ok {
			byName[c.Name] = i
		}
	}
	d.chromMap = make([]int, len(d.contigs))
	for i, c := range d.contigs {
		d.chromMap[i] = -1
		if j, ok := byName[c]; ok && c != "" {
			d.chromMap[i] = j
		}
	}
	for i, s := range d.strs {
		switch {
		case s == "GT" && d.keyGT < 0:
			d.keyGT = i
		case s == "GQ" && d.keyGQ < 0:
			d.keyGQ = i
		case s == "DP" && d.keyDP < 0:
			d.keyDP = i
		case s == "PL" && d.keyPL < 0:
			d.keyPL = i
		case s == "GL" && d.keyGL < 0:
			d.keyGL = i
		}
		if opt.InfoKey != "" && s == opt.InfoKey && d.keyInfo < 0 {
			d.keyInfo = i
		}
	}
	if len(opt.Regions) > 0 {
		d.regions = newRegionSet(opt.Regions)
	}
	return d
}

// bcfCursor walks the typed values of one record part.
type bcfCursor struct {
	b []byte
	p int
}

var errBCFShort = errors.New("value runs past the end of the record")

// typeDesc reads a type descriptor byte and, for counts of 15 or more, the
// typed integer that follows (section 6.3.3).
func (c *bcfCursor) typeDesc() (typ byte, n int, err error) {
	if c.p >= len(c.b) {
		return 0, 0, errBCFShort
	}
	d := c.b[c.p]
	c.p++
	typ, n = d&0x0F, int(d>>4)
	if n == 15 {
		v, err := c.typedInt()
		if err != nil {
			return 0, 0, err
		}
		if v < 0 {
			return 0, 0, fmt.Errorf("negative vector length %d", v)
		}
		n = int(v)
	}
	switch typ {
	case bcfTypeNull, bcfTypeInt8, bcfTypeInt16, bcfTypeInt32, bcfTypeFloat, bcfTypeChar:
	default:
		return 0, 0, fmt.Errorf("unknown value type %d", typ)
	}
	return typ, n, nil
}

// typedInt reads a single typed integer (a dictionary key or a length).
func (c *bcfCursor) typedInt() (int32, error) {
	if c.p >= len(c.b) {
		return 0, errBCFShort
	}
	d := c.b[c.p]
	c.p++
	if d>>4 != 1 {
		return 0, fmt.Errorf("expected one integer, got %d values", d>>4)
	}
	typ := d & 0x0F
	size := bcfSize(typ)
	if typ != bcfTypeInt8 && typ != bcfTypeInt16 && typ != bcfTypeInt32 {
		return 0, fmt.Errorf("expected an integer, got type %d", typ)
	}
	if c.p+size > len(c.b) {
		return 0, errBCFShort
	}
	v := bcfInt(c.b[c.p:], typ, 0)
	c.p += size
	return v, nil
}

// skip advances over n values of type typ and returns them.
func (c *bcfCursor) take(typ byte, n int) ([]byte, error) {
	size := bcfSize(typ)
	if n < 0 || n > (len(c.b)-c.p)/max(size, 1) {
		if size == 0 {
			return nil, nil
		}
		return nil, errBCFShort
	}
	s := c.b[c.p : c.p+n*size]
	c.p += n * size
	return s, nil
}

func bcfSize(typ byte) int {
	switch typ {
	case bcfTypeInt8, bcfTypeChar:
		return 1
	case bcfTypeInt16:
		return 2
	case bcfTypeInt32, bcfTypeFloat:
		return 4
	}
	return 0
}

// bcfInt returns the i-th integer of b, widened, with the width's missing
// and end-of-vector sentinels mapped to bcfIntMissing and bcfIntVectorEnd.
func bcfInt(b []byte, typ byte, i int) int32 {
	switch typ {
	case bcfTypeInt8:
		v := int8(b[i])
		switch v {
		case -128:
			return bcfIntMissing
		case -127:
			return bcfIntVectorEnd
		}
		return int32(v)
	case bcfTypeInt16:
		v := int16(binary.LittleEndian.Uint16(b[2*i:]))
		switch v {
		case -32768:
			return bcfIntMissing
		case -32767:
			return bcfIntVectorEnd
		}
		return int32(v)
	default:
		return int32(binary.LittleEndian.Uint32(b[4*i:]))
	}
}

// bcfNumber returns the i-th value of b as float64 and whether it is
// present (not missing, not end of vector). Floats go through their
// shortest decimal form and the VCF parser's number parser, so that a BCF
// float32 gives the same float64 as the decimal text it was written from
// (0.14, not 0.14000000059604645). For char values b is the text (up to
// a NUL or a comma) and i must be 0.
func (d *bcfDecoder) bcfNumber(b []byte, typ byte, i int) (float64, bool) {
	switch typ {
	case bcfTypeInt8, bcfTypeInt16, bcfTypeInt32:
		v := bcfInt(b, typ, i)
		if v == bcfIntMissing || v == bcfIntVectorEnd {
			return 0, false
		}
		return float64(v), true
	case bcfTypeFloat:
		bits := binary.LittleEndian.Uint32(b[4*i:])
		if bits == bcfFloatMissing || bits == bcfFloatVectorEnd {
			return 0, false
		}
		// Likelihoods and frequencies repeat a lot: a small direct-mapped
		// cache saves the decimal round trip.
		e := &d.fcache[(bits*2654435761)>>20]
		if e.set && e.bits == bits {
			return e.val, e.ok
		}
		s := strconv.AppendFloat(d.num[:0], float64(math.Float32frombits(bits)), 'g', -1, 32)
		v, ok := parseNum(s)
		*e = bcfFloatEntry{bits: bits, val: v, ok: ok, set: true}
		return v, ok
	case bcfTypeChar:
		s := bcfTrimNUL(b)
		if c := bytes.IndexByte(s, ','); c >= 0 {
			s = s[:c]
		}
		return parseNum(s)
	}
	return 0, false
}

// decode reads record rec (the two length words and both parts, as
// returned by readBCFRecord) and, when the site policy keeps it, appends
// it to b; otherwise it reports why not. The caller counts the record in
// b.Read and a skip in b.Skipped; decode counts masked calls in b.Masked.
// Errors are *ParseError with the record index and, when d.name is a BGZF
// file and every record went through this decoder in order, the record's
// virtual offset.
// index is the 0-based record number, stored in Record.Line and in
// errors. b.NSamples must equal the number of selected samples.
func (d *bcfDecoder) decode(rec []byte, index int64, b *Batch) (kept bool, reason SkipReason, err error) {
	d.cur = d.seen
	d.seen += int64(len(rec))
	if d.dictErr != nil {
		return false, 0, d.fail(index, "header", ErrMalformed, "%v", d.dictErr)
	}
	if len(rec) < 8 {
		return false, 0, d.fail(index, "record", ErrTruncated, "%d bytes, need at least 8", len(rec))
	}
	ls := uint64(binary.LittleEndian.Uint32(rec[0:4]))
	li := uint64(binary.LittleEndian.Uint32(rec[4:8]))
	if 8+ls+li != uint64(len(rec)) {
		return false, 0, d.fail(index, "record", ErrMalformed, "l_shared %d + l_indiv %d do not match the %d record bytes", ls, li, len(rec)-8)
	}
	shared := rec[8 : 8+ls]
	indiv := rec[8+ls:]
	if len(shared) < 24 {
		return false, 0, d.fail(index, "record", ErrMalformed, "shared part has %d bytes, the fixed fields need 24", len(shared))
	}
	chrom := int32(binary.LittleEndian.Uint32(shared[0:4]))
	pos0 := int32(binary.LittleEndian.Uint32(shared[4:8]))
	nAlleleInfo := binary.LittleEndian.Uint32(shared[16:20])
	nFmtSample := binary.LittleEndian.Uint32(shared[20:24])
	nInfo := int(nAlleleInfo & 0xFFFF)
	nAllele := int(nAlleleInfo >> 16)
	nSample := int(nFmtSample & 0xFFFFFF)
	nFmt := int(nFmtSample >> 24)
	if chrom < 0 || int(chrom) >= len(d.chromMap) || d.chromMap[chrom] < 0 {
		return false, 0, d.fail(index, "CHROM", ErrMalformed, "contig number %d is not in the header's contig dictionary (%d contigs)", chrom, len(d.chromMap))
	}
	if pos0 < -1 { // -1 is VCF POS 0, allowed for telomeres
		return false, 0, d.fail(index, "POS", ErrMalformed, "position %d before the start of the contig", pos0+1)
	}
	if nSample != d.nSamples && !(nFmt == 0 && nSample == 0) {
		return false, 0, d.fail(index, "n_sample", ErrSampleCount, "record has %d samples, the header %d", nSample, d.nSamples)
	}
	pos := int64(pos0) + 1
	chromID := d.chromMap[chrom]
	if d.st != nil {
		d.st.track(chromID, pos, index)
	}

	c := bcfCursor{b: shared, p: 24}
	typ, n, err := c.typeDesc()
	if err != nil {
		return false, 0, d.fail(index, "ID", ErrMalformed, "%v", err)
	}
	id, err := c.take(typ, n)
	if err != nil {
		return false, 0, d.fail(index, "ID", ErrMalformed, "%v", err)
	}
	if typ != bcfTypeChar {
		id = nil
	}
	id = bcfTrimNUL(id)

	if nAllele == 0 {
		return false, 0, d.fail(index, "REF", ErrMalformed, "record has no alleles")
	}
	var ref, alt []byte
	for i := 0; i < nAllele; i++ {
		typ, n, err := c.typeDesc()
		if err != nil {
			return false, 0, d.fail(index, "alleles", ErrMalformed, "%v", err)
		}
		a, err := c.take(typ, n)
		if err != nil {
			return false, 0, d.fail(index, "alleles", ErrMalformed, "%v", err)
		}
		if typ != bcfTypeChar && n > 0 {
			return false, 0, d.fail(index, "alleles", ErrMalformed, "allele %d has value type %d, expected characters", i, typ)
		}
		switch i {
		case 0:
			ref = bcfTrimNUL(a)
		case 1:
			alt = bcfTrimNUL(a)
		}
	}
	if len(ref) == 0 {
		return false, 0, d.fail(index, "REF", ErrMalformed, "empty reference allele")
	}
	if nAllele == 1 {
		alt = []byte{'.'} // no ALT allele is written "." in VCF
	}
	if len(alt) == 0 {
		return false, 0, d.fail(index, "ALT", ErrMalformed, "empty alternate allele")
	}

	// FILTER
	ftyp, fn, err := c.typeDesc()
	if err != nil {
		return false, 0, d.fail(index, "FILTER", ErrMalformed, "%v", err)
	}
	fv, err := c.take(ftyp, fn)
	if err != nil {
		return false, 0, d.fail(index, "FILTER", ErrMalformed, "%v", err)
	}
	if fn > 0 && ftyp != bcfTypeInt8 && ftyp != bcfTypeInt16 && ftyp != bcfTypeInt32 {
		return false, 0, d.fail(index, "FILTER", ErrMalformed, "filter list has value type %d, expected integers", ftyp)
	}
	pass, nFilter := true, 0
	for i := 0; i < fn; i++ {
		k := bcfInt(fv, ftyp, i)
		if k == bcfIntVectorEnd || k == bcfIntMissing {
			continue
		}
		if k < 0 || int(k) >= len(d.strs) || d.strs[k] == "" {
			return false, 0, d.fail(index, "FILTER", ErrMalformed, "filter number %d is not in the header's dictionary", k)
		}
		nFilter++
		if d.strs[k] != "PASS" {
			pass = false
		}
	}
	if nFilter > 1 {
		pass = false // "PASS;x" is not PASS in the VCF text either
	}

	// The same checks in the same order as vcfParser.parseLine.
	reason = SkipReason(-1)
	switch {
	case d.regions != nil && !d.regions.overlaps(d.contigs[chrom], pos, regionEnd(pos, ref, d.opt.RegionsByStart)):
		reason = SkipOutsideRegion
	case nAllele > 2:
		if lim := d.opt.Limits.MaxAlleles; lim > 0 && nAllele > lim {
			return false, 0, d.fail(index, "ALT", ErrLimit, "%d alleles, more than the limit of %d; raise --guard-alleles if the file is genuine", nAllele, lim)
		}
		reason = SkipMultiallelic
	case isSymbolic(alt):
		reason = SkipSymbolic
	case len(ref) != 1 || len(alt) != 1 || !isACGT[ref[0]] || !isACGT[alt[0]]:
		reason = SkipIndel
	case !d.opt.IncludeFiltered && !pass:
		reason = SkipFiltered
	case d.nSamples == 0:
		reason = SkipNoGT
	}

	// FORMAT: locate GT, GQ, DP and PL/GL.
	var gt, gq, dp, pl, gl bcfField
	if reason < 0 {
		fc := bcfCursor{b: indiv}
		for i := 0; i < nFmt; i++ {
			key, err := fc.typedInt()
			if err != nil {
				return false, 0, d.fail(index, "FORMAT", ErrMalformed, "%v", err)
			}
			typ, n, err := fc.typeDesc()
			if err != nil {
				return false, 0, d.fail(index, "FORMAT", ErrMalformed, "%v", err)
			}
			if typ == bcfTypeNull {
				n = 0 // a count without values carries nothing
			}
			if n > 0 && nSample > 0 && n > (len(indiv)-fc.p)/nSample {
				return false, 0, d.fail(index, "FORMAT", ErrMalformed, "%v", errBCFShort)
			}
			v, err := fc.take(typ, n*nSample)
			if err != nil {
				return false, 0, d.fail(index, "FORMAT", ErrMalformed, "%v", err)
			}
			if key < 0 || int(key) >= len(d.strs) || d.strs[key] == "" {
				return false, 0, d.fail(index, "FORMAT", ErrMalformed, "key number %d is not in the header's dictionary", key)
			}
			f := bcfField{typ: typ, n: n, data: v, ok: true}
			switch int(key) {
			case d.keyGT:
				gt = f
			case d.keyGQ:
				gq = f
			case d.keyDP:
				dp = f
			case d.keyPL:
				pl = f
			case d.keyGL:
				gl = f
			}
		}
		if !gt.ok {
			reason = SkipNoGT
		}
	}
	if reason >= 0 {
		return false, reason, nil
	}
	if gt.n > 0 && gt.typ != bcfTypeInt8 && gt.typ != bcfTypeInt16 && gt.typ != bcfTypeInt32 {
		return false, 0, d.fail(index, "GT", ErrMalformed, "GT has value type %d, expected integers", gt.typ)
	}

	// INFO value.
	info := NaN
	if d.keyInfo >= 0 {
		for i := 0; i < nInfo; i++ {
			key, err := c.typedInt()
			if err != nil {
				return false, 0, d.fail(index, "INFO", ErrMalformed, "%v", err)
			}
			typ, n, err := c.typeDesc()
			if err != nil {
				return false, 0, d.fail(index, "INFO", ErrMalformed, "%v", err)
			}
			v, err := c.take(typ, n)
			if err != nil {
				return false, 0, d.fail(index, "INFO", ErrMalformed, "%v", err)
			}
			if int(key) != d.keyInfo {
				continue
			}
			if n == 0 || typ == bcfTypeNull {
				info = 1 // a flag, as infoValue does for text
			} else if x, ok := d.bcfNumber(v, typ, 0); ok {
				info = x
			}
			break
		}
	}

	// Genotypes.
	nOut := len(d.sel)
	base := len(b.GT)
	b.GT = growGeno(b.GT, nOut)
	calls := b.GT[base : base+nOut]
	if gt.typ == bcfTypeInt8 && gt.n == 2 {
		// Fast path for the common diploid int8 vector: one table lookup
		// per call; anything unusual falls back to bcfGenotype below.
		for j, s := range d.sel {
			calls[j] = bcfGT8[uint16(gt.data[2*s])<<8|uint16(gt.data[2*s+1])]
		}
	} else {
		for j := range calls {
			calls[j] = slowGT
		}
	}
	for j, s := range d.sel {
		if calls[j] != slowGT {
			continue
		}
		code := Missing
		if gt.n > 0 {
			var w warnKind
			code, w, err = bcfGenotype(gt.data, gt.typ, s*gt.n, gt.n)
			if err != nil {
				b.GT = b.GT[:base]
				return false, 0, d.fail(index, "GT", ErrMalformed, "sample %d: %v", s+1, err)
			}
			if w != noWarn && d.st != nil {
				d.st.addWarn(w, index, 1)
			}
		}
		calls[j] = code
	}
	var likOut []uint16
	if d.opt.WantPL {
		src, isGL := pl, false
		if !pl.ok {
			src, isGL = gl, true
		}
		b.HasPL = append(b.HasPL, src.ok)
		likOut = plRoom(b, len(b.Records), nOut, src.ok)
		if src.ok && src.n > 0 {
			for j, s := range d.sel {
				if err := d.likelihoods(likOut[3*j:3*j+3], src, s, isGL, calls[j], index); err != nil {
					b.GT = b.GT[:base]
					return false, 0, err
				}
			}
		}
	}
	if d.opt.WantDP {
		b.HasDP = append(b.HasDP, dp.ok)
		if out := dpRoom(b, len(b.Records), nOut, dp.ok); dp.ok && dp.n > 0 {
			for j, s := range d.sel {
				if v, ok := d.sampleNumber(dp, s); ok && v >= 0 && v <= math.MaxInt32 {
					out[j] = int32(v)
				}
			}
		}
	}
	if d.opt.MinGQ > 0 || d.opt.MinDP > 0 {
		minGQ, minDP := float64(d.opt.MinGQ), float64(d.opt.MinDP)
		for j, s := range d.sel {
			if calls[j] == Missing {
				continue
			}
			masked := false
			if minDP > 0 && dp.n > 0 {
				if v, ok := d.sampleNumber(dp, s); ok && v < minDP {
					masked = true
				}
			}
			if minGQ > 0 && gq.n > 0 {
				if v, ok := d.sampleNumber(gq, s); ok && v < minGQ {
					masked = true
				}
			}
			if masked {
				calls[j] = Missing
				b.Masked++
				if likOut != nil {
					clear(likOut[3*j : 3*j+3]) // masked: no information
				}
			}
		}
	}

	// ID, FILTER, REF and ALT bytes go to the batch arena.
	a0 := len(b.arena)
	if len(id) == 0 {
		b.arena = append(b.arena, '.')
	} else {
		b.arena = append(b.arena, id...)
	}
	a1 := len(b.arena)
	if nFilter == 0 {
		b.arena = append(b.arena, '.')
	} else {
		first := true
		for i := 0; i < fn; i++ {
			k := bcfInt(fv, ftyp, i)
			if k < 0 {
				continue
			}
			if !first {
				b.arena = append(b.arena, ';')
			}
			first = false
			b.arena = append(b.arena, d.strs[k]...)
		}
	}
	a2 := len(b.arena)
	b.arena = append(b.arena, ref...)
	a3 := len(b.arena)
	b.arena = append(b.arena, alt...)
	a4 := len(b.arena)
	b.Records = append(b.Records, Record{
		ChromID:   chromID,
		Pos:       pos,
		ID:        b.arena[a0:a1:a1],
		Filter:    b.arena[a1:a2:a2],
		Ref:       b.arena[a2:a3:a3],
		Alt:       b.arena[a3:a4:a4],
		InfoValue: info,
		Line:      index,
	})
	return true, 0, nil
}

// sampleNumber returns the first value of FORMAT field f for file sample s
// (for a character field, the number its text spells, as in VCF).
func (d *bcfDecoder) sampleNumber(f bcfField, s int) (float64, bool) {
	if f.typ == bcfTypeChar {
		return d.bcfNumber(f.data[s*f.n:(s+1)*f.n], f.typ, 0)
	}
	return d.bcfNumber(f.data, f.typ, s*f.n)
}

// bcfField is one FORMAT field of a record: n values of type typ per sample.
type bcfField struct {
	typ  byte
	n    int
	data []byte
	ok   bool
}

func (d *bcfDecoder) fail(index int64, field string, sentinel error, format string, args ...any) error {
	return &ParseError{File: d.name, Offset: d.recordOffset(), Record: index, Field: field,
		Err: fmt.Errorf("%w: %s", sentinel, fmt.Sprintf(format, args...))}
}

// likelihoods fills dst (0/0, 0/1, 1/1) from the PL or GL values of file
// sample s, whose call is coded code, with the rules of
// decodeLikelihoods: values the specification does not allow are an
// error naming the record, missing elements are counted and stored as
// zeros. GL is converted to phred as round(-10*GL).
func (d *bcfDecoder) likelihoods(dst []uint16, f bcfField, s int, gl bool, code Geno, index int64) error {
	dst[0], dst[1], dst[2] = 0, 0, 0
	var v [3]float64
	n, missing := 0, false
	base := s * f.n
	key := "PL"
	if gl {
		key = "GL"
	}
	bad := func(problem string) error {
		return d.fail(index, key, ErrMalformed, "sample %d: %s", s+1, problem)
	}
	for k := 0; k < f.n; k++ {
		var x float64
		switch f.typ {
		case bcfTypeInt8, bcfTypeInt16, bcfTypeInt32:
			// Integers (PL as htslib writes it) need no decimal round trip.
			xi := bcfInt(f.data, f.typ, base+k)
			if xi == bcfIntVectorEnd {
				k = f.n
				continue
			}
			if xi == bcfIntMissing {
				n++
				missing = true
				continue
			}
			x = float64(xi)
		case bcfTypeFloat:
			bits := binary.LittleEndian.Uint32(f.data[4*(base+k):])
			if bits == bcfFloatVectorEnd {
				k = f.n
				continue
			}
			if bits == bcfFloatMissing {
				n++
				missing = true
				continue
			}
			var ok bool
			if x, ok = d.bcfNumber(f.data, f.typ, base+k); !ok {
				return bad("a value is not a number")
			}
		default:
			return nil // text likelihoods are not numbers we decode
		}
		if problem := likValueProblem(x, gl); problem != "" {
			return bad(problem)
		}
		if n < 3 {
			v[n] = x
		}
		n++
	}
	if n == 0 {
		return nil
	}
	missing, problem := storeLikelihoods(dst, &v, n, missing, gl, code)
	if missing && d.st != nil {
		d.st.addWarn(warnLikMissing, index, 1)
	}
	if problem != "" {
		return bad(problem)
	}
	return nil
}

// bcfGT8 maps the two int8 values of a diploid GT vector to the call code,
// or to slowGT when bcfGenotype must decide (haploid, warnings, errors).
var bcfGT8 = func() *[1 << 16]Geno {
	var t [1 << 16]Geno
	for i := range t {
		v := [2]byte{byte(i >> 8), byte(i)}
		g, w, err := bcfGenotype(v[:], bcfTypeInt8, 0, 2)
		if err != nil || w != noWarn {
			g = slowGT
		}
		t[i] = g
	}
	return &t
}()

// noWarn is the warnKind result of bcfGenotype when there is nothing to warn.
const noWarn warnKind = -1

// bcfGenotype codes the GT vector of one sample: n values from value index
// off, each (allele+1)<<1 | phased with 0 for a missing allele, padded with
// end-of-vector below the record's largest ploidy (BCF 2.2 section
// 6.3.3). The rules are those of vcfParser.parseGT: an allele above 1 is
// an error; one allele gives a haploid code (and a haploid warning unless
// it is missing); more than two give Missing and a polyploid warning; any
// missing allele gives Missing.
func bcfGenotype(data []byte, typ byte, off, n int) (Geno, warnKind, error) {
	ploidy, alts, miss := 0, 0, 0
	for k := 0; k < n; k++ {
		v := bcfInt(data, typ, off+k)
		if v == bcfIntVectorEnd {
			break
		}
		ploidy++
		if v == bcfIntMissing || v>>1 == 0 {
			miss++
			continue
		}
		a := v>>1 - 1
		if a < 0 || a > 1 {
			return 0, noWarn, fmt.Errorf("allele %d is used but ALT lists only 1 allele", a)
		}
		alts += int(a)
	}
	switch {
	case ploidy == 0:
		return Missing, noWarn, nil
	case ploidy == 1:
		switch {
		case miss > 0:
			return Missing, noWarn, nil
		case alts > 0:
			return HaploidAlt, warnHaploid, nil
		}
		return HaploidRef, warnHaploid, nil
	case ploidy > 2:
		return Missing, warnPolyploid, nil
	case miss > 0:
		return Missing, noWarn, nil
	}
	return Geno(alts), noWarn, nil
}

func bcfTrimNUL(b []byte) []byte {
	if i := bytes.IndexByte(b, 0); i >= 0 {
		return b[:i]
	}
	return b
}
