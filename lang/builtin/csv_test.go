package builtin

import (
	"errors"
	"strconv"
	"strings"
	"testing"
	"unicode/utf8"
)

// TestParseCSV: tables and malformed lines, each error at its line:column
// (worked out by hand from the input; columns count code points).
func TestParseCSV(t *testing.T) {
	ok := []struct {
		src    string
		header bool
		rows   string
	}{
		{"1,2\n3,4\n", false, "[[1 2] [3 4]]"},
		{"# c\n\n 1 , 2 \r\n\"3\",4", false, "[[1 2] [3 4]]"},
		{"a,\"b,c\"\n1,2\n", true, "[[1 2]]"},
		{"-1.5e-3\n+2\n", false, "[[-0.0015] [2]]"},
	}
	for _, tt := range ok {
		got, err := parseCSV(strings.NewReader(tt.src), tt.header, func(int) error { return nil })
		if err != nil {
			t.Errorf("%q: %v", tt.src, err)
			continue
		}
		if s := fmtRows(got.Rows); s != tt.rows {
			t.Errorf("%q: rows %s, want %s", tt.src, s, tt.rows)
		}
		if tt.header && strings.Join(got.Header, "|") != "a|b,c" {
			t.Errorf("%q: header %q", tt.src, got.Header)
		}
	}
	bad := []struct{ src, at, msg string }{
		{"1,2\n3,x\n", "2:3", `"x" is not a number`},
		{"1,2\n3\n", "2:1", "this row has 1 fields but the first row (line 1) has 2"},
		{"1,2\n3,4,5\n", "2:3", "has 3 fields"},
		{"1,\n", "1:3", "empty field"},
		{"1,\"2\n", "1:3", "without its closing quote"},
		{"1,\"2\"x\n", "1:6", "after a quoted field"},
		{"1,2\"\n", "1:4", "a quote inside an unquoted field"},
		{"1\u00a0,x\n", "1:4", `"x" is not a number`}, // a no-break space: 2 bytes, 1 column
		{"1,inf\n", "1:3", "not finite"},
		{"1,0x10\n", "1:3", "not a number"},
		{"# only\n\n", "2:1", "no rows of numbers"},
		{"", "1:1", "no rows of numbers"},
	}
	for _, tt := range bad {
		_, err := parseCSV(strings.NewReader(tt.src), false, func(int) error { return nil })
		var ce *csvError
		if !errors.As(err, &ce) {
			t.Errorf("%q: %v, want a csvError", tt.src, err)
			continue
		}
		if at := strings.SplitN(ce.Error(), ":", 3); at[0]+":"+at[1] != tt.at || !strings.Contains(ce.Msg, tt.msg) {
			t.Errorf("%q: %v, want %s: …%s…", tt.src, ce, tt.at, tt.msg)
		}
	}
}

func fmtRows(rows [][]float64) string {
	var sb strings.Builder
	sb.WriteString("[")
	for i, r := range rows {
		if i > 0 {
			sb.WriteString(" ")
		}
		sb.WriteString("[")
		for j, x := range r {
			if j > 0 {
				sb.WriteString(" ")
			}
			sb.WriteString(fmtG(x))
		}
		sb.WriteString("]")
	}
	return sb.String() + "]"
}

// FuzzCSV: parseCSV never panics, and every error names a line and a
// column inside the input (or one past its last line).
func FuzzCSV(f *testing.F) {
	for _, s := range []string{"1,2\n3,4\n", "a,b\n1,2", "\"1\",\"\"\"\n", "# x\n\n1e5,-2\r\n", "1,,2\n", "é\n"} {
		f.Add(s, false)
		f.Add(s, true)
	}
	f.Fuzz(func(t *testing.T, src string, header bool) {
		entries := 0
		tab, err := parseCSV(strings.NewReader(src), header, func(n int) error { entries = n; return nil })
		if err == nil {
			if len(tab.Rows) == 0 || entries == 0 {
				t.Fatalf("%q: no rows without an error", src)
			}
			for _, r := range tab.Rows {
				if len(r) != len(tab.Rows[0]) {
					t.Fatalf("%q: ragged rows accepted", src)
				}
			}
			return
		}
		var ce *csvError
		if !errors.As(err, &ce) {
			return // a reader error
		}
		lines := strings.Split(src, "\n")
		if ce.Line < 1 || ce.Line > len(lines)+1 || ce.Col < 1 {
			t.Fatalf("%q: error at %d:%d outside the input", src, ce.Line, ce.Col)
		}
		if ce.Line <= len(lines) && ce.Col > utf8.RuneCountInString(lines[ce.Line-1])+1 {
			t.Fatalf("%q: column %d beyond line %d", src, ce.Col, ce.Line)
		}
	})
}

func fmtG(x float64) string { return strconv.FormatFloat(x, 'g', -1, 64) }
