package bulk

import (
	"bytes"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"sort"
	"strconv"
	"strings"

	"warmfit/lattice"
)

// UnknownUnit is the unit that marks an error column whose errors are not
// known: a header "chi_err [unknown]" (cells empty or "unknown") states
// that the fit must estimate the errors of chi from the residual scatter.
const UnknownUnit = "unknown"

// ReadOptions adjusts how files are read.
type ReadOptions struct {
	// UnknownStderr lists quantities whose errors are declared unknown
	// although the file has no error column: the same as a header
	// "NAME_err [unknown]".
	UnknownStderr map[Quantity]bool
}

// ReadFile reads the curves of one CSV file; see ParseCSV.
func ReadFile(path string, opt ReadOptions) ([]*Series, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	// Capped before parsing: a CSV reader holds a whole line, and a
	// device such as /dev/zero has no end of line.
	data, err := lattice.ReadAllLimited(f, path)
	if err != nil {
		return nil, err
	}
	return ParseCSV(bytes.NewReader(data), path, opt)
}

// column is one parsed header field.
type column struct {
	index  int
	name   string // T, H, chi, C, M, chi_err, ...
	header string
	unit   string
	factor float64
}

// ParseCSV reads bulk curves from CSV text; name is used in messages.
//
// The first line that is not blank and not a '#' comment is the header.
// Each header field is NAME [UNIT] (or NAME (UNIT)): T [K] is required;
// the quantity columns are chi, C and M, each followed somewhere by its
// standard-error column NAME_err in a unit of the same kind, or by
// NAME_err [unknown] to declare the errors unknown. M needs an H [T]
// column (mu0 H in tesla); chi and C are zero-field curves. A cell left
// empty in a quantity column means no measurement of that quantity at
// that row. Every error names the file, the line and the column.
func ParseCSV(r io.Reader, name string, opt ReadOptions) ([]*Series, error) {
	cr := csv.NewReader(r)
	cr.Comment = '#'
	cr.FieldsPerRecord = -1
	cr.TrimLeadingSpace = true
	header, err := cr.Read()
	if err == io.EOF {
		return nil, fmt.Errorf("%s: no header line (want for example \"T [K], chi [emu/mol], chi_err [emu/mol]\")", name)
	}
	if err != nil {
		return nil, fmt.Errorf("%s: %w", name, err)
	}
	headerLine, _ := cr.FieldPos(0)
	cols, err := parseHeader(header, name, headerLine)
	if err != nil {
		return nil, err
	}
	layout, err := planColumns(cols, name, headerLine, opt)
	if err != nil {
		return nil, err
	}
	for {
		rec, err := cr.Read()
		if err == io.EOF {
			break
		}
		if err != nil {
			var pe *csv.ParseError
			if errors.As(err, &pe) {
				return nil, fmt.Errorf("%s:%d: %v", name, pe.Line, pe.Err)
			}
			return nil, fmt.Errorf("%s: %w", name, err)
		}
		line, _ := cr.FieldPos(0)
		if len(rec) != len(header) {
			return nil, fmt.Errorf("%s:%d: %d fields, the header has %d", name, line, len(rec), len(header))
		}
		if err := layout.addRow(rec, name, line); err != nil {
			return nil, err
		}
	}
	var out []*Series
	for _, s := range layout.series {
		if len(s.Points) == 0 {
			return nil, fmt.Errorf("%s: column %s has no values", name, s.Column)
		}
		if err := checkOrder(s); err != nil {
			return nil, err
		}
		out = append(out, s)
	}
	return out, nil
}

// parseHeader splits every header field into name and unit and checks the
// unit against the name.
func parseHeader(fields []string, file string, line int) ([]column, error) {
	cols := make([]column, len(fields))
	seen := map[string]int{}
	for i, f := range fields {
		nm, unit, ok := splitHeaderField(f)
		if !ok {
			return nil, fmt.Errorf("%s:%d: column %d %q: want NAME [UNIT], for example \"T [K]\" or \"chi_err [emu/mol]\"", file, line, i+1, f)
		}
		if j, dup := seen[nm]; dup {
			return nil, fmt.Errorf("%s:%d: column %q repeats column %d", file, line, f, j+1)
		}
		seen[nm] = i
		base := strings.TrimSuffix(nm, "_err")
		if _, ok := unitFactors[base]; !ok || (base != nm && (base == "T" || base == "H")) {
			return nil, fmt.Errorf("%s:%d: column %q: unknown name %q (known: %s)", file, line, f, nm, knownColumns())
		}
		c := column{index: i, name: nm, header: strings.TrimSpace(f), unit: unit}
		if base != nm && normUnit(unit) == UnknownUnit {
			c.unit = UnknownUnit
		} else {
			fac, err := unitFactor(base, unit)
			if err != nil {
				return nil, fmt.Errorf("%s:%d: column %q: %v", file, line, f, err)
			}
			c.factor = fac
		}
		cols[i] = c
	}
	return cols, nil
}

// splitHeaderField splits "chi [emu/mol]" or "C (J/(mol K))" into name
// and unit.
func splitHeaderField(f string) (name, unit string, ok bool) {
	f = strings.TrimSpace(f)
	i := strings.IndexAny(f, "[(")
	if i <= 0 {
		return "", "", false
	}
	closer := map[byte]byte{'[': ']', '(': ')'}[f[i]]
	if f[len(f)-1] != closer {
		return "", "", false
	}
	name = strings.TrimSpace(f[:i])
	unit = strings.TrimSpace(f[i+1 : len(f)-1])
	return name, unit, name != "" && unit != ""
}

// fileLayout says which columns feed which series.
type fileLayout struct {
	t, h   *column
	values []*column // one per series
	errs   []*column // error column of each series; nil when unknown
	series []*Series
}

func planColumns(cols []column, file string, line int, opt ReadOptions) (*fileLayout, error) {
	byName := map[string]*column{}
	for i := range cols {
		byName[cols[i].name] = &cols[i]
	}
	l := &fileLayout{t: byName["T"], h: byName["H"]}
	if l.t == nil {
		return nil, fmt.Errorf("%s:%d: no temperature column \"T [K]\"", file, line)
	}
	for i := range cols {
		c := &cols[i]
		q, isQuantity := quantityByName[c.name]
		if !isQuantity {
			if base, isErr := strings.CutSuffix(c.name, "_err"); isErr && byName[base] == nil {
				return nil, fmt.Errorf("%s:%d: column %q is an error column without a %s column", file, line, c.header, base)
			}
			continue
		}
		if q == Magnetization && l.h == nil {
			return nil, fmt.Errorf("%s:%d: column %q: M needs a field column \"H [T]\" (mu0 H in tesla)", file, line, c.header)
		}
		if q != Magnetization && l.h != nil {
			return nil, fmt.Errorf("%s:%d: column %q: %s is read as a zero-field curve; give data in a field as M(H) in a file of its own", file, line, c.header, c.name)
		}
		ec := byName[c.name+"_err"]
		s := &Series{Quantity: q, File: file, Column: c.header, Unit: c.unit}
		switch {
		case ec != nil && ec.unit == UnknownUnit:
			s.StderrUnknown = true
			ec = nil
		case ec == nil && opt.UnknownStderr[q]:
			s.StderrUnknown = true
		case ec == nil:
			return nil, fmt.Errorf("%s:%d: column %q has no standard-error column: add \"%s_err [%s]\", or declare the errors unknown with a column \"%s_err [unknown]\" (they are then estimated from the residual scatter)",
				file, line, c.header, c.name, c.unit, c.name)
		}
		l.values = append(l.values, c)
		l.errs = append(l.errs, ec)
		l.series = append(l.series, s)
	}
	if len(l.series) == 0 {
		return nil, fmt.Errorf("%s:%d: no quantity column (want chi, C or M)", file, line)
	}
	return l, nil
}

// addRow adds the values of one data row to the series.
func (l *fileLayout) addRow(rec []string, file string, line int) error {
	t, err := parseCell(rec, l.t, file, line)
	if err != nil {
		return err
	}
	if !(t > 0) {
		return fmt.Errorf("%s:%d: column %q: temperature %v K is not positive", file, line, l.t.header, t)
	}
	var h float64
	if l.h != nil {
		if h, err = parseCell(rec, l.h, file, line); err != nil {
			return err
		}
	}
	for k, c := range l.values {
		if strings.TrimSpace(rec[c.index]) == "" {
			continue
		}
		v, err := parseCell(rec, c, file, line)
		if err != nil {
			return err
		}
		sd := math.NaN()
		if ec := l.errs[k]; ec != nil {
			if sd, err = parseCell(rec, ec, file, line); err != nil {
				return err
			}
			switch {
			case sd < 0:
				return fmt.Errorf("%s:%d: column %q: negative standard error %s", file, line, ec.header, strings.TrimSpace(rec[ec.index]))
			case sd == 0:
				return fmt.Errorf("%s:%d: column %q: zero standard error (a point with no error would dominate the fit; give the instrument's resolution)", file, line, ec.header)
			}
		}
		l.series[k].Points = append(l.series[k].Points, Point{T: t, H: h, Value: v, Stderr: sd, Line: line})
	}
	return nil
}

// parseCell reads one number and converts it to the internal unit.
func parseCell(rec []string, c *column, file string, line int) (float64, error) {
	s := strings.TrimSpace(rec[c.index])
	if s == "" {
		return 0, fmt.Errorf("%s:%d: column %q: empty", file, line, c.header)
	}
	v, err := strconv.ParseFloat(s, 64)
	if err != nil || math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%s:%d: column %q: %q is not a finite number", file, line, c.header, s)
	}
	return v * c.factor, nil
}

// checkOrder refuses duplicated and non-monotone temperatures (chi, C) or
// fields (M, within one temperature), then sorts the points increasingly.
// A series may run up or down, but only one way.
func checkOrder(s *Series) error {
	if s.Quantity == Magnetization {
		return checkFieldOrder(s)
	}
	pts := s.Points
	for i := 1; i < len(pts); i++ {
		if pts[i].T == pts[i-1].T {
			return fmt.Errorf("%s:%d: column %q: temperature %g K repeats line %d", s.File, pts[i].Line, s.Column, pts[i].T, pts[i-1].Line)
		}
		if i >= 2 && (pts[i].T > pts[i-1].T) != (pts[1].T > pts[0].T) {
			return fmt.Errorf("%s:%d: column %q: temperature %g K breaks the %s order of lines %d-%d (sort the file or split it into one file per sweep)",
				s.File, pts[i].Line, s.Column, pts[i].T, direction(pts[1].T > pts[0].T), pts[0].Line, pts[i-1].Line)
		}
	}
	sort.SliceStable(pts, func(a, b int) bool { return pts[a].T < pts[b].T })
	return nil
}

func direction(up bool) string {
	if up {
		return "increasing"
	}
	return "decreasing"
}

// checkFieldOrder wants the rows of an M(H) series in blocks of one
// temperature each, fields strictly monotone within a block.
func checkFieldOrder(s *Series) error {
	pts := s.Points
	seenT := map[float64]int{}
	start := 0
	for i := 0; i <= len(pts); i++ {
		if i < len(pts) && pts[i].T == pts[start].T {
			continue
		}
		block := pts[start:i]
		if first, dup := seenT[block[0].T]; dup {
			return fmt.Errorf("%s:%d: column %q: temperature %g K starts a second block (the first starts on line %d); keep each M(H) sweep in one block", s.File, block[0].Line, s.Column, block[0].T, first)
		}
		seenT[block[0].T] = block[0].Line
		for j := 1; j < len(block); j++ {
			if block[j].H == block[j-1].H {
				return fmt.Errorf("%s:%d: column %q: field %g T at %g K repeats line %d", s.File, block[j].Line, s.Column, block[j].H, block[j].T, block[j-1].Line)
			}
			if j >= 2 && (block[j].H > block[j-1].H) != (block[1].H > block[0].H) {
				return fmt.Errorf("%s:%d: column %q: field %g T breaks the %s order of the %g K sweep", s.File, block[j].Line, s.Column, block[j].H, direction(block[1].H > block[0].H), block[j].T)
			}
		}
		start = i
	}
	sort.SliceStable(pts, func(a, b int) bool {
		if pts[a].T != pts[b].T {
			return pts[a].T < pts[b].T
		}
		return pts[a].H < pts[b].H
	})
	return nil
}
