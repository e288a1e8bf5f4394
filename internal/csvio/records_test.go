package csvio

import (
	"bytes"
	"encoding/csv"
	"fmt"
	"io"
	"strings"
	"testing"
)

// compareWithStd reads data with recordReader and with encoding/csv (the
// reference) and fails on the first difference in records, errors or lines;
// the raw bytes of a good record must read back to the same record.
func compareWithStd(t *testing.T, data []byte) {
	t.Helper()
	mine := newRecordReader(bytes.NewReader(data))
	lazy := newRecordReader(bytes.NewReader(data))
	std := csv.NewReader(bytes.NewReader(data))
	std.FieldsPerRecord = -1
	std.ReuseRecord = true
	for n := 0; n < 10000; n++ {
		want, werr := std.Read()
		got, gerr := mine.Read()
		if fmt.Sprint(werr) != fmt.Sprint(gerr) {
			t.Fatalf("record %d of %q: error %v, encoding/csv %v", n, data, gerr, werr)
		}
		// ReadUnsplit, its quote-free records split with SplitFields, gives
		// the same record, error, line and raw bytes as Read.
		lrec, unsplit, lerr := lazy.ReadUnsplit()
		if unsplit {
			lrec = SplitFields(nil, string(lazy.raw))
		}
		if fmt.Sprint(lerr) != fmt.Sprint(gerr) || fmt.Sprintf("%q", lrec) != fmt.Sprintf("%q", got) ||
			(gerr == nil && (lazy.recLine != mine.recLine || !bytes.Equal(lazy.raw, mine.raw))) {
			t.Fatalf("record %d of %q: ReadUnsplit %q (%v, line %d, raw %q), Read %q (%v, line %d, raw %q)",
				n, data, lrec, lerr, lazy.recLine, lazy.raw, got, gerr, mine.recLine, mine.raw)
		}
		if werr == io.EOF {
			return
		}
		if fmt.Sprintf("%q", got) != fmt.Sprintf("%q", want) {
			t.Fatalf("record %d of %q: %q, encoding/csv %q", n, data, got, want)
		}
		if werr != nil {
			if _, ok := werr.(*csv.ParseError); !ok {
				return
			}
			continue
		}
		if line, _ := std.FieldPos(0); line != mine.recLine {
			t.Fatalf("record %d of %q: line %d, encoding/csv %d", n, data, mine.recLine, line)
		}
		// As the converter uses it: raw input columns, then more columns.
		back := csv.NewReader(bytes.NewReader(append(append([]byte{}, mine.raw...), ",x\n"...)))
		back.FieldsPerRecord = -1
		rec, err := back.Read()
		// A field holding "\r\n" reads back as "\n", as it does after a round
		// trip through encoding/csv's own writer and reader.
		norm := make([]string, 0, len(want)+1)
		for _, f := range want {
			norm = append(norm, strings.ReplaceAll(f, "\r\n", "\n"))
		}
		if err != nil || fmt.Sprintf("%q", rec) != fmt.Sprintf("%q", append(norm, "x")) {
			t.Fatalf("record %d of %q: raw %q reads as %q (%v), want %q", n, data, mine.raw, rec, err, want)
		}
	}
}

func TestRecordReaderMatchesStd(t *testing.T) {
	for _, s := range []string{
		"", "\n", "a,b\n", "a,b", "a,b\r\n", "a,b\r", "a,\"b\nc\",d\n", "\"a\"\"b\",c\n", "a\"b,c\n", "\"a\"b,c\n",
		"\"abc", "\"abc\n", "a,b\n\n\nc,d\n", "\"a\r\nb\"\r\n", "x,\"\"\n", ",,\n", "\"\"\n", "a,\"b\"\"\n", "a\rb,c\n",
		"é,\"ü\",ß\n", "\"a\",\n", "\"a\"\n\"b", "a,\"\n\"\n",
	} {
		compareWithStd(t, []byte(s))
	}
	long := bytes.Repeat([]byte("x"), 200000)
	compareWithStd(t, append(append([]byte("a,"), long...), []byte("\nb,\"c\n"+string(long)+"\"\n")...))
}

func FuzzRecordReader(f *testing.F) {
	for _, s := range []string{"a,b\n", "a,\"b\nc\",d\r\n", "\"a\"\"b\",c\n", "a\"b\n", "\"x", "\n\n,\n"} {
		f.Add([]byte(s))
	}
	f.Fuzz(func(t *testing.T, data []byte) { compareWithStd(t, data) })
}
