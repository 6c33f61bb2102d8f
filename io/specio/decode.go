package specio

import (
	"bytes"
	"strings"
	"unicode/utf16"
	"unicode/utf8"
)

// decode turns the raw bytes of an export into UTF-8 text. It strips a UTF-8
// byte-order mark, decodes UTF-16 LE or BE marked by a byte-order mark, and
// rejects NUL bytes. Input that is not valid UTF-8 but reads as
// Windows-1252 (Latin-1) text is decoded as such (decodeWindows1252), else
// it is an ErrEncoding. A file that uses bare CR line endings
// (no LF at all) has them turned into LF. The note says what was decoded
// ("" for plain UTF-8).
//
// UTF-16 is decoded with unicode/utf16 from the standard library: with the
// byte order fixed by the mark, that is all that is needed, and it keeps the
// module free of golang.org/x/text.
func decode(b []byte, name string) (text, note string, err error) {
	switch {
	case bytes.HasPrefix(b, []byte{0xEF, 0xBB, 0xBF}):
		text, note = string(b[3:]), "UTF-8 with byte-order mark"
	case bytes.HasPrefix(b, []byte{0xFF, 0xFE}):
		text, err = decodeUTF16(b[2:], false, name)
		note = "UTF-16 little-endian (byte-order mark), decoded"
	case bytes.HasPrefix(b, []byte{0xFE, 0xFF}):
		text, err = decodeUTF16(b[2:], true, name)
		note = "UTF-16 big-endian (byte-order mark), decoded"
	default:
		text = string(b)
	}
	if err != nil {
		return "", "", err
	}
	if i := strings.IndexByte(text, 0); i >= 0 {
		line, col := lineCol(text, i)
		detail := "NUL byte: this is not a text export"
		if note == "" && looksUTF16(b) {
			detail = "NUL byte: looks like UTF-16 without a byte-order mark; export as UTF-8, or UTF-16 with a byte-order mark"
		}
		return "", "", &ParseError{File: name, Line: line, Column: col, Err: ErrEncoding, Detail: detail}
	}
	if !utf8.ValidString(text) && note == "" {
		if t, ok := decodeWindows1252(b); ok {
			text, note = t, "not UTF-8: read as Windows-1252 (Latin-1), the encoding of older Windows instrument software"
		}
	}
	if !utf8.ValidString(text) {
		i := 0
		for i < len(text) {
			r, n := utf8.DecodeRuneInString(text[i:])
			if r == utf8.RuneError && n <= 1 {
				break
			}
			i += n
		}
		line, col := lineCol(text, i)
		return "", "", &ParseError{File: name, Line: line, Column: col, Err: ErrEncoding,
			Detail: "invalid UTF-8: export as UTF-8, or UTF-16 with a byte-order mark"}
	}
	if strings.IndexByte(text, '\r') >= 0 && strings.IndexByte(text, '\n') < 0 {
		text = strings.ReplaceAll(text, "\r", "\n")
	}
	return text, note, nil
}

// windows1252 maps the bytes 0x80–0x9F of Windows-1252 to Unicode (0 where
// the code page leaves them undefined); the bytes 0xA0–0xFF are Latin-1,
// equal to their code points. From the Unicode Consortium's mapping file
// MAPPINGS/VENDORS/MICSFT/WINDOWS/CP1252.TXT. Written out here because the
// standard library has no single-byte code pages and 32 entries do not
// justify golang.org/x/text.
var windows1252 = [32]rune{
	0x20AC, 0, 0x201A, 0x0192, 0x201E, 0x2026, 0x2020, 0x2021, 0x02C6, 0x2030, 0x0160, 0x2039, 0x0152, 0, 0x017D, 0,
	0, 0x2018, 0x2019, 0x201C, 0x201D, 0x2022, 0x2013, 0x2014, 0x02DC, 0x2122, 0x0161, 0x203A, 0x0153, 0, 0x017E, 0x0178,
}

// decodeWindows1252 decodes b (not valid UTF-8) as Windows-1252 text, the
// superset of Latin-1 that Windows instrument software writes ("µm" as the
// byte 0xB5). It refuses, so that binary data is still reported as such,
// input with control bytes other than tab, line breaks, form feed and the
// DOS end-of-file mark 0x1A, with a byte the code page leaves undefined, or
// with more than a quarter of its bytes above 0x7F.
func decodeWindows1252(b []byte) (string, bool) {
	high := 0
	for _, c := range b {
		switch {
		case c < 0x20 && c != '\t' && c != '\n' && c != '\r' && c != '\f' && c != 0x1a, c == 0x7f:
			return "", false
		case c >= 0x80 && c < 0xa0 && windows1252[c-0x80] == 0:
			return "", false
		case c >= 0x80:
			high++
		}
	}
	if 4*high > len(b) {
		return "", false
	}
	var sb strings.Builder
	sb.Grow(len(b) + high)
	for _, c := range b {
		switch {
		case c < 0x80:
			sb.WriteByte(c)
		case c < 0xa0:
			sb.WriteRune(windows1252[c-0x80])
		default:
			sb.WriteRune(rune(c))
		}
	}
	return sb.String(), true
}

// decodeUTF16 decodes UTF-16 code units (after the byte-order mark) into
// UTF-8. An odd byte count or an unpaired surrogate is an ErrEncoding.
func decodeUTF16(b []byte, bigEndian bool, name string) (string, error) {
	if len(b)%2 != 0 {
		// Point at the end of the text that is there.
		text, err := decodeUTF16(b[:len(b)-1], bigEndian, name)
		line, col := 0, 0
		if err == nil {
			line, col = lineCol(text, len(text))
		}
		return "", &ParseError{File: name, Line: line, Column: col, Err: ErrEncoding,
			Detail: "UTF-16 input with an odd number of bytes: the file is truncated here"}
	}
	unit := func(i int) rune {
		if bigEndian {
			return rune(b[i])<<8 | rune(b[i+1])
		}
		return rune(b[i+1])<<8 | rune(b[i])
	}
	var sb strings.Builder
	sb.Grow(len(b) / 2)
	line, lineStart := 1, 0
	for i := 0; i < len(b); i += 2 {
		r := unit(i)
		if utf16.IsSurrogate(r) {
			r2 := utf8.RuneError
			if r < 0xDC00 && i+3 < len(b) {
				r2 = utf16.DecodeRune(r, unit(i+2))
			}
			if r2 == utf8.RuneError {
				return "", &ParseError{File: name, Line: line, Column: sb.Len() - lineStart + 1, Err: ErrEncoding,
					Detail: "invalid UTF-16: unpaired surrogate"}
			}
			r = r2
			i += 2
		}
		sb.WriteRune(r)
		if r == '\n' {
			line++
			lineStart = sb.Len()
		}
	}
	return sb.String(), nil
}

// looksUTF16 reports whether b looks like UTF-16 text without a byte-order
// mark: in the first bytes, every other byte is NUL and the others are not.
func looksUTF16(b []byte) bool {
	n := min(len(b), 64) &^ 1
	if n < 4 {
		return false
	}
	var even, odd int
	for i := 0; i < n; i += 2 {
		if b[i] == 0 {
			even++
		}
		if b[i+1] == 0 {
			odd++
		}
	}
	half := n / 2
	return (even == half && odd == 0) || (odd == half && even == 0)
}

// lineCol returns the 1-based line and byte column of offset off in text.
func lineCol(text string, off int) (line, col int) {
	off = min(max(off, 0), len(text))
	line = 1 + strings.Count(text[:off], "\n")
	col = off - (strings.LastIndexByte(text[:off], '\n') + 1) + 1
	return line, col
}
