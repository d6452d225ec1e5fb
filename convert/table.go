package convert

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"strconv"
	"strings"
)

// ReadCurve parses a reference curve: CSV with the header `strain,stress`
// and at least two rows of finite numbers, in recorded order. Errors name the
// file, the line and the column.
func ReadCurve(name string, data []byte) ([][2]float64, error) {
	rows, err := ReadTable(name, data, "strain", "stress")
	if err != nil {
		return nil, err
	}
	if len(rows) < 2 {
		return nil, fmt.Errorf("%s: a curve needs at least 2 points, found %d", name, len(rows))
	}
	pts := make([][2]float64, len(rows))
	for i, r := range rows {
		pts[i] = [2]float64{r[0], r[1]}
	}
	return pts, nil
}

// ReadTable parses CSV whose header is exactly the given columns (a UTF-8
// BOM, spaces around fields and CRLF line ends are accepted) and whose rows
// are finite numbers. Errors are "name:line: ..." and name the column.
func ReadTable(name string, data []byte, columns ...string) ([][]float64, error) {
	data = bytes.TrimPrefix(data, []byte("\xef\xbb\xbf"))
	r := csv.NewReader(bytes.NewReader(data))
	r.TrimLeadingSpace = true
	r.FieldsPerRecord = -1
	r.ReuseRecord = true
	head, err := r.Read()
	if errors.Is(err, io.EOF) {
		return nil, fmt.Errorf("%s: empty file, expected the header %q", name, strings.Join(columns, ","))
	}
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	if len(head) != len(columns) {
		return nil, fmt.Errorf("%s:1: header %q, expected %q", name, strings.Join(head, ","), strings.Join(columns, ","))
	}
	for i, h := range head {
		if strings.TrimSpace(h) != columns[i] {
			return nil, fmt.Errorf("%s:1: header %q, expected %q", name, strings.Join(head, ","), strings.Join(columns, ","))
		}
	}
	var rows [][]float64
	for {
		rec, err := r.Read()
		if errors.Is(err, io.EOF) {
			break
		}
		if err != nil {
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		line, _ := r.FieldPos(0)
		if len(rec) != len(columns) {
			return nil, fmt.Errorf("%s:%d: %d fields, expected %d (%s)", name, line, len(rec), len(columns), strings.Join(columns, ","))
		}
		row := make([]float64, len(columns))
		for i, s := range rec {
			v, err := strconv.ParseFloat(strings.TrimSpace(s), 64)
			if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
				return nil, fmt.Errorf("%s:%d: %s %q is not a finite number", name, line, columns[i], s)
			}
			row[i] = v
		}
		rows = append(rows, row)
	}
	return rows, nil
}
