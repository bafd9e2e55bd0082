package vcfscan

import (
	"bytes"
	"fmt"
	"io"
)

// chunkLoopDirect is chunkLoop for a whole BGZF text file read with
// default batching: each job of inflated blocks becomes a batch's text
// where the inflater wrote it. The partial line at the end of a job is
// copied into the headroom in front of the next job's bytes (a line, not
// a chunk), so the text crosses from the inflater to the parser without
// a copy. Lines longer than the headroom take the copying path of
// chunkLoop for the chunk they start.
func (r *Reader) chunkLoopDirect(z *bgzfReader, carry []byte) {
	defer close(r.work)
	maxLine := r.opt.Limits.MaxLineBytes
	var spare []byte // a buffer for the next job to inflate into
	for {
		select {
		case r.slots <- struct{}{}:
		case <-r.quit:
			return
		}
		b := r.newBatch()
		b.st.reset()
		if spare == nil {
			spare = b.arena
		}
		b.arena = nil
		var owner, chunk []byte
		for chunk == nil {
			buf, lo, hi, err := z.take(spare)
			if err == io.EOF {
				if len(carry) == 0 {
					b.st.terminal, b.st.err = true, io.EOF
					r.order <- b
					return
				}
				// The last line has no newline.
				owner, chunk, carry = carry, carry, nil
				break
			}
			if err != nil {
				b.st.terminal, b.st.err = true, err
				r.order <- b
				return
			}
			if buf == nil {
				continue // empty blocks; spare is still ours
			}
			spare = nil
			data := buf[lo:hi]
			nl := bytes.LastIndexByte(data, '\n')
			if nl < 0 {
				if len(carry)+len(data) > maxLine {
					b.st.terminal = true
					b.st.err = &ParseError{File: r.name, Line: 1, Offset: -1, Record: -1, Field: "line",
						Err: fmt.Errorf("%w: line longer than %d bytes; raise --guard-line-bytes if the file is genuine", ErrLimit, maxLine)}
					r.order <- b
					return
				}
				carry = growCarry(carry, len(data), maxLine)
				carry = append(carry, data...)
				spare = buf
				continue
			}
			if len(carry) <= lo {
				start := lo - len(carry)
				copy(buf[start:lo], carry)
				owner, chunk = buf, buf[start:lo+nl+1]
			} else {
				owner = make([]byte, 0, len(carry)+nl+1)
				owner = append(append(owner, carry...), data[:nl+1]...)
				chunk = owner
				spare = buf
			}
			carry = append(carry[:0], data[nl+1:]...)
		}
		b.arena = owner
		b.st.data = chunk
		r.order <- b
		r.work <- b
	}
}

// growCarry makes room for n more bytes in carry as chunkLoop grows its
// buffer: doubling, but stepping straight to the line limit when the next
// doubling would pass it, so that a hostile line costs about 1.5 times the
// limit at most. The caller has checked len(carry)+n <= maxLine.
func growCarry(carry []byte, n, maxLine int) []byte {
	need := len(carry) + n
	if need <= cap(carry) {
		return carry
	}
	nc := max(2*cap(carry), need)
	if 2*nc > maxLine+1 {
		nc = max(need, maxLine+1)
	}
	nb := make([]byte, len(carry), nc)
	copy(nb, carry)
	return nb
}
