package fit

import (
	"bufio"
	"encoding/csv"
	"errors"
	"fmt"
	"io"
	"math"
	"os"
	"strconv"
	"strings"

	"warmfit/lattice"
)

// Row is one line of an expectation table: the expectation value of the
// Pauli term Pauli on Sites, in canonical form (sites increasing, letters
// permuted with them), with its standard error when HasStderr is set
// (exact values have none). Extra holds the columns after the four fixed
// ones, one per Table.ExtraHeader entry.
type Row struct {
	Pauli     string
	Sites     []int
	Value     float64
	Stderr    float64
	HasStderr bool
	Extra     []string
	// Line is the row's line in the file it was read from; 0 otherwise.
	Line int
}

// Key identifies the row's term; it equals lattice.Term.Key of the same
// canonical term.
func (r Row) Key() string { return lattice.TermKey(r.Pauli, r.Sites) }

// Table is an expectation table: header pauli,sites,value,stderr followed
// by the ExtraHeader columns, one Row per term. Comments are '#' lines,
// without the '#' and one following space; WriteTable puts them before
// the header.
type Table struct {
	Comments    []string
	ExtraHeader []string
	Rows        []Row
}

// Index maps each row's term key (lattice.TermKey) to its position.
func (t *Table) Index() map[string]int {
	m := make(map[string]int, len(t.Rows))
	for i, r := range t.Rows {
		m[r.Key()] = i
	}
	return m
}

// ExactStderr is what the stderr column holds for a value known exactly
// (a model prediction, noiseless synthetic data). Exactness must be said:
// a blank or zero stderr is an error, not a silent claim of exact data.
const ExactStderr = "exact"

// Limits of physical expectation values. A Pauli expectation lies in
// [-1, 1]; a measured estimate may stray by statistical error, so a value
// is refused only when it lies outside by more than rangeSigmas standard
// errors, or by more than rangeSlack for exact values (rounding).
const (
	rangeSigmas = 5
	rangeSlack  = 1e-9
)

// rangeProblem describes why value cannot be a Pauli expectation, or
// returns "".
func rangeProblem(value, stderr float64, hasStderr bool) string {
	limit := 1 + rangeSlack
	if hasStderr {
		limit = 1 + max(rangeSigmas*stderr, rangeSlack)
	}
	if math.Abs(value) <= limit {
		return ""
	}
	if hasStderr {
		return fmt.Sprintf("%v lies outside [-1, 1] by more than %d standard errors (stderr %v)", value, rangeSigmas, stderr)
	}
	return fmt.Sprintf("%v lies outside [-1, 1] (an exact value)", value)
}

// ReadTableFile reads the expectation table in the named file.
func ReadTableFile(path string) (*Table, error) {
	f, err := os.Open(path)
	if err != nil {
		return nil, err
	}
	defer f.Close()
	return ReadTable(f, path)
}

// ReadTable reads an expectation table; name labels error messages
// (usually the file name). Terms are put in canonical form. It refuses a
// header that does not start with pauli,sites,value,stderr, rows with the
// wrong number of fields, unparsable or non-finite numbers, negative
// standard errors, values outside [-1, 1] by more than 5 standard errors
// (1e-9 for exact values) and repeated terms, naming the line and field.
func ReadTable(r io.Reader, name string) (*Table, error) {
	name = displayName(name)
	sc := bufio.NewScanner(r)
	sc.Buffer(make([]byte, 0, 64*1024), maxLineBytes)
	t := &Table{}
	var ncol int
	header := false
	seen := map[string]int{} // term key -> line
	line := 0
	for sc.Scan() {
		line++
		text := cleanLine(sc.Text(), line)
		if skipLine(text) {
			if c, ok := commentText(text); ok {
				t.Comments = append(t.Comments, c)
			}
			continue
		}
		fields, err := splitRecord(text)
		if err != nil {
			return nil, dataErrorf(name, line, "", "%v", err)
		}
		if !header {
			h := make([]string, len(fields))
			for i, f := range fields {
				h[i] = strings.ToLower(f)
			}
			if err := checkHeader(name, line, h, tableHeader); err != nil {
				return nil, err
			}
			t.ExtraHeader = fields[len(tableHeader):]
			ncol = len(fields)
			header = true
			continue
		}
		if len(fields) != ncol {
			if sites, ok := commaSplitSites(fields, ncol); ok {
				return nil, dataErrorf(name, line, "sites", "%q looks like sites separated by commas, which split the row into %d fields (the header has %d); separate sites by spaces, as in %q",
					sites, len(fields), ncol, strings.ReplaceAll(sites, ",", " "))
			}
			return nil, dataErrorf(name, line, "", "row has %d fields, the header has %d", len(fields), ncol)
		}
		row, field, err := parseTableRow(fields)
		if err != nil {
			return nil, dataErrorf(name, line, field, "%v", err)
		}
		key := row.Key()
		if prev, dup := seen[key]; dup {
			return nil, dataErrorf(name, line, "", "term %q repeats the term of line %d", key, prev)
		}
		seen[key] = line
		row.Line = line
		t.Rows = append(t.Rows, row)
	}
	if err := sc.Err(); err != nil {
		return nil, scanError(name, line, err)
	}
	if !header {
		return nil, dataErrorf(name, 0, "", "no header line (want %q)", strings.Join(tableHeader, ","))
	}
	return t, nil
}

// commaSplitSites recognises a row whose sites were written with commas
// ("ZZ,0,1,0.5,0.01"): the extra fields all sit where the sites go, and
// they and the sites field are site indices. It returns the sites as
// written ("0,1").
func commaSplitSites(fields []string, ncol int) (string, bool) {
	extra := len(fields) - ncol
	if extra <= 0 {
		return "", false
	}
	sites := fields[1 : 2+extra]
	for _, f := range sites {
		if n, err := strconv.Atoi(f); err != nil || n < 0 {
			return "", false
		}
	}
	return strings.Join(sites, ","), true
}

// commentText returns the text of a '#' line without '#' and one space.
func commentText(s string) (string, bool) {
	t := strings.TrimSpace(s)
	if t == "" {
		return "", false
	}
	t = strings.TrimPrefix(t[1:], " ")
	return t, true
}

// splitRecord splits one CSV line; quoted fields are allowed (extra
// columns may need them) and surrounding spaces are trimmed.
func splitRecord(s string) ([]string, error) {
	var fields []string
	if strings.ContainsRune(s, '"') {
		cr := csv.NewReader(strings.NewReader(s))
		cr.FieldsPerRecord = -1
		cr.LazyQuotes = false
		rec, err := cr.Read()
		if err != nil {
			return nil, fmt.Errorf("malformed CSV: %v", err)
		}
		fields = rec
	} else {
		fields = strings.Split(s, ",")
	}
	for i := range fields {
		fields[i] = strings.TrimSpace(fields[i])
	}
	return fields, nil
}

// parseTableRow parses the fields of one data row; on failure it returns
// the name of the offending field.
func parseTableRow(fields []string) (Row, string, error) {
	var row Row
	pauli := strings.ToUpper(fields[0])
	parts := strings.Fields(fields[1])
	if len(parts) == 0 {
		return row, "sites", fmt.Errorf("empty")
	}
	sites := make([]int, len(parts))
	for i, p := range parts {
		s, err := strconv.Atoi(p)
		if err != nil || s < 0 {
			if strings.ContainsAny(p, ",;") {
				return row, "sites", fmt.Errorf("%q: separate sites by spaces, as in \"0 1\"", fields[1])
			}
			return row, "sites", fmt.Errorf("%q is not a site index (a non-negative integer)", p)
		}
		sites[i] = s
	}
	cp, cs, err := lattice.Canonical(pauli, sites)
	if err != nil {
		field := "sites"
		var te *lattice.TermError
		if errors.As(err, &te) {
			field = te.Field
		}
		return row, field, err
	}
	row.Pauli, row.Sites = cp, cs

	v, err := parseFinite(fields[2])
	if err != nil {
		return row, "value", err
	}
	row.Value = v
	switch sd := strings.TrimSpace(fields[3]); {
	case strings.EqualFold(sd, ExactStderr):
		// An exact value: HasStderr stays false.
	case sd == "":
		return row, "stderr", fmt.Errorf("empty: a blank stderr is not read as an exact value; give the standard error, or write %q for a value known exactly", ExactStderr)
	default:
		s, err := parseFinite(sd)
		if err != nil {
			return row, "stderr", err
		}
		if s < 0 {
			return row, "stderr", fmt.Errorf("%q is negative", fields[3])
		}
		if s == 0 {
			return row, "stderr", fmt.Errorf("%q: a zero stderr is not read as an exact value; write %q for a value known exactly", fields[3], ExactStderr)
		}
		row.Stderr, row.HasStderr = s, true
	}
	if msg := rangeProblem(row.Value, row.Stderr, row.HasStderr); msg != "" {
		return row, "value", fmt.Errorf("%s", msg)
	}
	if len(fields) > len(tableHeader) {
		row.Extra = append([]string(nil), fields[len(tableHeader):]...)
	}
	return row, "", nil
}

func parseFinite(s string) (float64, error) {
	v, err := strconv.ParseFloat(s, 64)
	if err != nil {
		if s == "" {
			return 0, fmt.Errorf("empty, want a number")
		}
		return 0, fmt.Errorf("%q is not a number", s)
	}
	if math.IsNaN(v) || math.IsInf(v, 0) {
		return 0, fmt.Errorf("%q is not a finite number", s)
	}
	return v, nil
}

// WriteTable writes t as CSV: comment lines, the header and one line per
// row, numbers in the shortest form that reads back exactly (strconv 'g',
// precision -1). It writes terms in canonical form and refuses anything
// ReadTable would refuse (non-finite numbers, negative stderr, values out
// of range, repeated terms, a wrong number of extra fields), naming the
// row.
func WriteTable(w io.Writer, t *Table) error {
	seen := make(map[string]int, len(t.Rows))
	for i, r := range t.Rows {
		if err := checkWriteRow(i, r, len(t.ExtraHeader), seen); err != nil {
			return err
		}
	}
	bw := bufio.NewWriter(w)
	for _, c := range t.Comments {
		for _, l := range strings.Split(c, "\n") {
			bw.WriteString(strings.TrimRight("# "+l, " ") + "\n")
		}
	}
	cw := csv.NewWriter(bw)
	if err := cw.Write(append(append([]string(nil), tableHeader...), t.ExtraHeader...)); err != nil {
		return err
	}
	rec := make([]string, len(tableHeader)+len(t.ExtraHeader))
	for _, r := range t.Rows {
		p, s, _ := lattice.Canonical(r.Pauli, r.Sites) // checked above
		rec[0] = p
		rec[1] = lattice.SitesString(s)
		rec[2] = strconv.FormatFloat(r.Value, 'g', -1, 64)
		rec[3] = ExactStderr
		if r.HasStderr {
			rec[3] = strconv.FormatFloat(r.Stderr, 'g', -1, 64)
		}
		for j := range t.ExtraHeader {
			rec[len(tableHeader)+j] = ""
			if r.Extra != nil {
				rec[len(tableHeader)+j] = r.Extra[j]
			}
		}
		if err := cw.Write(rec); err != nil {
			return err
		}
	}
	cw.Flush()
	if err := cw.Error(); err != nil {
		return err
	}
	return bw.Flush()
}

func checkWriteRow(i int, r Row, nextra int, seen map[string]int) error {
	p, s, err := lattice.Canonical(r.Pauli, r.Sites)
	if err != nil {
		return fmt.Errorf("table row %d: %v", i+1, err)
	}
	key := lattice.TermKey(p, s)
	label := fmt.Sprintf("table row %d (%s)", i+1, key)
	if prev, dup := seen[key]; dup {
		return fmt.Errorf("%s: term repeats row %d", label, prev+1)
	}
	seen[key] = i
	if math.IsNaN(r.Value) || math.IsInf(r.Value, 0) {
		return fmt.Errorf("%s: value is %v, not a finite number", label, r.Value)
	}
	if r.HasStderr && (math.IsNaN(r.Stderr) || math.IsInf(r.Stderr, 0) || r.Stderr <= 0) {
		return fmt.Errorf("%s: stderr is %v, not a finite positive number (an exact value has no stderr: HasStderr false)", label, r.Stderr)
	}
	if msg := rangeProblem(r.Value, r.Stderr, r.HasStderr); msg != "" {
		return fmt.Errorf("%s: value %s", label, msg)
	}
	if r.Extra != nil && len(r.Extra) != nextra {
		return fmt.Errorf("%s: %d extra fields, the table has %d extra columns", label, len(r.Extra), nextra)
	}
	return nil
}
