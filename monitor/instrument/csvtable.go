package instrument

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"strings"
)

// csvRows reads the string table the config points to. The first non-comment line
// is the header; each later line is one string. Lines starting with # are comments.
// Every row is read even when earlier ones have errors.
func (p *parser) csvRows(v any) []*row {
	at := p.at("string_table")
	name, ok := v.(string)
	if !ok || strings.TrimSpace(name) == "" || !strings.HasSuffix(strings.ToLower(name), ".csv") {
		p.c.add(at, v, `want the name of a .csv file, relative to the config's directory, e.g. "harp36.csv"`)
		return nil
	}
	file, data, err := p.readTable(name)
	var pe *fs.PathError
	switch {
	case errors.As(err, &pe):
		p.c.add(at, v, "cannot read the string table %s (%v); want an existing CSV file, named relative to the config's directory or by an absolute path",
			file, pe.Err)
		return nil
	case err != nil:
		p.c.add(at, v, "%v", err)
		return nil
	}
	return p.parseCSV(file, data)
}

// parseCSV turns a CSV table into rows; file names it in errors.
func (p *parser) parseCSV(file string, data []byte) []*row {
	r := csv.NewReader(bytes.NewReader(data))
	r.Comment = '#'
	r.FieldsPerRecord = -1
	r.TrimLeadingSpace = true
	header, err := r.Read()
	if err != nil {
		p.csvError(file, err, "a header row naming the columns, e.g. id,note,length_mm,core,core_mm")
		return nil
	}
	line, _ := r.FieldPos(0)
	cols, ok := p.csvHeader(file, line, header)
	var rows []*row
	for n := 1; ; n++ {
		rec, err := r.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			p.csvError(file, err, "well-formed CSV (quote cells that contain commas)")
			return rows
		}
		line, _ := r.FieldPos(0)
		if !ok {
			continue
		}
		if len(rec) != len(cols) {
			p.c.add(pos{file: file, line: line, field: fmt.Sprintf("row %d", n)}, nil,
				"%d cells; want %d, one per header column (leave a cell empty for no value)", len(rec), len(cols))
			continue
		}
		rw := newRow(pos{file: file, line: line, field: fmt.Sprintf("row %d", n)})
		for i, name := range cols {
			p.set(rw, name, strings.TrimSpace(rec[i]), pos{file: file, line: line, field: fmt.Sprintf("%s (row %d)", name, n)})
		}
		rows = append(rows, rw)
	}
	if ok && len(rows) == 0 {
		p.c.add(pos{file: file, line: line}, nil, "no strings; want one row per string after the header")
	}
	return rows
}

// csvHeader checks the column names; ok is false when the table cannot be read.
func (p *parser) csvHeader(file string, line int, header []string) ([]string, bool) {
	cols := make([]string, len(header))
	seen := map[string]string{}
	guessed := map[string]bool{} // keys a bad column name probably meant
	ok := true
	for i, h := range header {
		name := strings.ToLower(strings.TrimSpace(h))
		cols[i] = name
		at := pos{file: file, line: line, field: fmt.Sprintf("column %d", i+1)}
		d, bad := classify(name)
		if bad != "" {
			p.c.add(at, name, "%s", bad)
			ok = false
			guessed[d.key] = true
			continue
		}
		if prev, dup := seen[d.key]; dup {
			p.c.add(at, name, "the same quantity as column %q; want one of them", prev)
			ok = false
			continue
		}
		seen[d.key] = name
	}
	for _, req := range []struct{ key, want string }{
		{"id", "id"},
		{"length", "length_mm (or length_in, length_m)"},
		{"core", "core (the core material)"},
		{"core_d", "core_mm (or core_in)"},
	} {
		if _, has := seen[req.key]; !has && !guessed[req.key] {
			p.c.add(pos{file: file, line: line, field: "header"}, nil, "missing column; want %s", req.want)
			ok = false
		}
	}
	_, hasNote := seen["note"]
	_, hasTarget := seen["target"]
	if !hasNote && !hasTarget && !guessed["note"] && !guessed["target"] {
		p.c.add(pos{file: file, line: line, field: "header"}, nil, "missing column; want note or target_hz")
		ok = false
	}
	return cols, ok
}

func (p *parser) csvError(file string, err error, want string) {
	var pe *csv.ParseError
	if errors.As(err, &pe) {
		p.c.add(pos{file: file, line: pe.Line}, nil, "CSV: %v; want %s", pe.Err, want)
		return
	}
	if err == io.EOF {
		p.c.add(pos{file: file, line: 1}, nil, "empty table; want %s", want)
		return
	}
	p.c.add(pos{file: file}, nil, "CSV: %v; want %s", err, want)
}
