package builtin

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"
	"unicode/utf8"

	"semiflow/lang/eval"
	"semiflow/lang/objects"
	"semiflow/lang/syntax"
	"semiflow/lang/value"
	"semiflow/numerics/memguard"
)

// csvFamily: reading numbers from CSV files.
var csvFamily = []*Builtin{
	{
		Name: "readcsv",
		Params: []value.Param{
			req("path", "the file to read"),
			opt("header", value.Bool(false), "true when the first line names the columns: the result is then a table whose columns are read by name"),
			opt("shape", value.Str("auto"), `"auto" (a vector for one row or one column, a matrix otherwise), "matrix" or "vector"`),
		},
		Doc: "Numbers from a CSV file: fields separated by commas, one row per line, every row with as many fields as the first; a field may be quoted (\"1.5\"), blank lines and lines starting with # are skipped. " +
			"Every number must be finite. With header=true the first line holds the column names and the result is a table: t.name is a column as a vector, t[i] row i. " +
			"A malformed file is refused with the line and column of the first bad field (path:line:column), and a file larger than the entry limit or the memory guard is refused before it is kept." + regularOnly,
		Examples: []Example{
			{`writecsv([1.5, 2, 3], "/tmp/semiflow_readcsv_example.csv"); readcsv("/tmp/semiflow_readcsv_example.csv")`, "[1.5, 2, 3]"},
		},
		Impl: readcsvImpl,
	},
}

// maxCSVLine bounds the length of one line of a CSV file.
const maxCSVLine = 16 << 20

// csvError is a malformed CSV file at line:column (both from 1).
type csvError struct {
	Line, Col int
	Msg       string
}

func (e *csvError) Error() string { return fmt.Sprintf("%d:%d: %s", e.Line, e.Col, e.Msg) }

// csvTable is what parseCSV reads: the header (nil without one) and the
// rows of numbers.
type csvTable struct {
	Header []string
	Rows   [][]float64
}

// parseCSV reads r. With header the first line that is not blank or a
// comment names the columns. check is called with the number of entries
// read so far after each row and stops the reading when it fails (limits,
// interrupts). Malformed input gives a *csvError.
func parseCSV(r io.Reader, header bool, check func(entries int) error) (*csvTable, error) {
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64<<10), maxCSVLine)
	t := &csvTable{}
	line, first, entries := 0, 0, 0
	for sc.Scan() {
		line++
		text := strings.TrimSuffix(sc.Text(), "\r")
		trimmed := strings.TrimSpace(text)
		if trimmed == "" || strings.HasPrefix(trimmed, "#") {
			continue
		}
		fields, err := splitCSVLine(text, line)
		if err != nil {
			return nil, err
		}
		if header && t.Header == nil {
			seen := map[string]int{}
			for k, f := range fields {
				name := strings.TrimSpace(f.text)
				if name == "" {
					return nil, &csvError{line, f.col, fmt.Sprintf("column %d of the header has no name", k+1)}
				}
				if j, dup := seen[name]; dup {
					return nil, &csvError{line, f.col, fmt.Sprintf("column name %q is used twice (columns %d and %d)", name, j+1, k+1)}
				}
				seen[name] = k
				t.Header = append(t.Header, name)
			}
			first = line
			continue
		}
		want := len(t.Header)
		if want == 0 && len(t.Rows) > 0 {
			want = len(t.Rows[0])
		}
		if want > 0 && len(fields) != want {
			what := "the first row"
			if header {
				what = "the header"
			}
			return nil, &csvError{line, fields[min(len(fields), want)-1].col, fmt.Sprintf("this row has %d fields but %s (line %d) has %d", len(fields), what, first, want)}
		}
		if first == 0 {
			first = line
		}
		row := make([]float64, len(fields))
		for k, f := range fields {
			x, err := csvNumber(f.text)
			if err != "" {
				return nil, &csvError{line, f.col, err}
			}
			row[k] = x
		}
		t.Rows = append(t.Rows, row)
		entries += len(row)
		if err := check(entries); err != nil {
			return nil, err
		}
	}
	if err := sc.Err(); err != nil {
		if errors.Is(err, bufio.ErrTooLong) {
			return nil, &csvError{line + 1, 1, fmt.Sprintf("line longer than %d MiB", maxCSVLine>>20)}
		}
		return nil, err
	}
	if len(t.Rows) == 0 {
		return nil, &csvError{max(line, 1), 1, "no rows of numbers in the file"}
	}
	return t, nil
}

// csvField is one field's text (quotes removed) and its column.
type csvField struct {
	text string
	col  int
}

// splitCSVLine splits one line at commas outside double quotes; inside a
// quoted field "" stands for one quote. Columns count code points from 1.
func splitCSVLine(text string, line int) ([]csvField, error) {
	var out []csvField
	col := func(off int) int { return utf8.RuneCountInString(text[:off]) + 1 }
	i := 0
	for {
		start := i
		for i < len(text) && (text[i] == ' ' || text[i] == '\t') {
			i++
		}
		if i < len(text) && text[i] == '"' {
			q := i
			var b strings.Builder
			i++
			for {
				if i >= len(text) {
					return nil, &csvError{line, col(q), "quoted field without its closing quote"}
				}
				if text[i] == '"' {
					if i+1 < len(text) && text[i+1] == '"' {
						b.WriteByte('"')
						i += 2
						continue
					}
					i++
					break
				}
				b.WriteByte(text[i])
				i++
			}
			for i < len(text) && (text[i] == ' ' || text[i] == '\t') {
				i++
			}
			if i < len(text) && text[i] != ',' {
				return nil, &csvError{line, col(i), "unexpected text after a quoted field; fields are separated by commas"}
			}
			out = append(out, csvField{b.String(), col(q)})
		} else {
			for i < len(text) && text[i] != ',' {
				if text[i] == '"' {
					return nil, &csvError{line, col(i), "a quote inside an unquoted field; quote the whole field"}
				}
				i++
			}
			out = append(out, csvField{text[start:i], col(start)})
		}
		if i >= len(text) {
			return out, nil
		}
		i++ // the comma
	}
}

// csvNumber parses a finite decimal number, or says why not.
func csvNumber(s string) (float64, string) {
	t := strings.TrimSpace(s)
	if t == "" {
		return 0, "empty field; every field must hold a number"
	}
	switch strings.ToLower(strings.TrimLeft(t, "+-")) {
	case "nan", "inf", "infinity":
		return 0, fmt.Sprintf("%s is not finite; every number must be finite", syntax.Shorten(t, syntax.QuoteWidth))
	}
	for _, r := range t {
		if !(r >= '0' && r <= '9' || r == '.' || r == 'e' || r == 'E' || r == '+' || r == '-') {
			return 0, fmt.Sprintf("%q is not a number", syntax.Shorten(t, syntax.QuoteWidth))
		}
	}
	x, err := strconv.ParseFloat(t, 64)
	if err != nil {
		if errors.Is(err, strconv.ErrRange) && math.IsInf(x, 0) {
			return 0, fmt.Sprintf("%s is out of the range of float64 (about ±1.8e308)", syntax.Shorten(t, syntax.QuoteWidth))
		}
		return 0, fmt.Sprintf("%q is not a number", syntax.Shorten(t, syntax.QuoteWidth))
	}
	return x, ""
}

func readcsvImpl(c *eval.Call) (value.Value, error) {
	path, err := argString(c, 0)
	if err != nil {
		return nil, err
	}
	hv, err := c.Arg(1)
	if err != nil {
		return nil, err
	}
	header, ok := hv.(value.Bool)
	if !ok {
		return nil, value.TypeErrorf("readcsv: header must be true or false, not %s", value.TypeName(hv))
	}
	shape, err := argChoice(c, 2, "auto", "matrix", "vector")
	if err != nil {
		return nil, err
	}
	f, err := openRegular(c.Name, path, os.O_RDONLY)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	t, err := parseCSV(f, bool(header), func(n int) error {
		if err := c.CheckSize(float64(n), "readcsv: the data"); err != nil {
			return err
		}
		if err := memguard.Floats(n, "numbers read from "+path); err != nil {
			return prefix(c, err)
		}
		return c.Tick(1)
	})
	if err != nil {
		var ce *csvError
		if errors.As(err, &ce) {
			return nil, value.ValueErrorf("readcsv: %s:%s", path, ce.Error())
		}
		if _, ok := err.(*value.Error); ok {
			return nil, err
		}
		if _, ok := err.(*eval.Error); ok {
			return nil, err
		}
		return nil, value.Errorf(value.ClassFile, "readcsv: %s: %v", path, err)
	}
	nr, nc := len(t.Rows), len(t.Rows[0])
	if header {
		rows := make([][]value.Value, nr)
		for i, r := range t.Rows {
			rows[i] = make([]value.Value, nc)
			for j, x := range r {
				rows[i][j] = value.Num(x)
			}
		}
		return objects.NewTable(fmt.Sprintf("table read from %s (%d rows)", path, nr), t.Header, rows), nil
	}
	if shape == "vector" || shape == "auto" && (nr == 1 || nc == 1) {
		if nr != 1 && nc != 1 {
			return nil, value.ValueErrorf("readcsv: %s holds a %d×%d matrix; shape=\"vector\" needs one row or one column", path, nr, nc)
		}
		x := make([]float64, 0, nr*nc)
		for _, r := range t.Rows {
			x = append(x, r...)
		}
		return value.RealVec(x), nil
	}
	m := value.NewMatrix(nr, nc)
	for i, r := range t.Rows {
		copy(m.Data[i*nc:], r)
	}
	return m, nil
}
