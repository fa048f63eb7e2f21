package main

import (
	"bytes"
	"encoding/csv"
	"encoding/json"
	"fmt"
	"io"
	"math"
	"os"
	"path/filepath"
	"runtime"
	"strings"

	"github.com/spf13/pflag"
)

// Every CSV a command writes goes through writeCSVResult, so that all of
// them load the same way: by default a clean CSV whose first line is the
// header (plain pandas.read_csv or encoding/csv reads it), with the
// metadata that used to sit in '#' lines in a JSON sidecar FILE.meta.json
// beside it; --csv-comments brings back the '#' lines instead.

// csvOutputHelp is the paragraph the help of every CSV-writing command
// carries.
const csvOutputHelp = `The CSV's first line is its header, so any CSV reader loads the file as it is.
What the run was (the command line, its settings, verdicts, every WARNING) goes to a JSON
sidecar FILE.meta.json written next to -o FILE (atomically, like FILE); with the CSV
on stdout there is no sidecar unless --meta M.json names one (WARNING lines are on
stderr either way).
--csv-comments writes them instead as '#' lines before the header (no sidecar unless
--meta is given).`

// csvFlags are the flags of a command that writes a CSV.
type csvFlags struct {
	comments bool   // --csv-comments
	meta     string // --meta FILE
}

// addCSVFlags registers --csv-comments and --meta; it clears f first (the
// runner registers flags afresh for every run).
func addCSVFlags(fs *pflag.FlagSet, f *csvFlags) {
	*f = csvFlags{}
	fs.BoolVar(&f.comments, "csv-comments", false, "put the metadata in '#' lines before the CSV header instead of a JSON sidecar")
	fs.StringVar(&f.meta, "meta", "", "write the metadata sidecar to `FILE` (default: OUT.meta.json beside -o OUT; none for stdout)")
}

// misuse refuses --csv-comments and --meta when the run writes no CSV
// (what names the output it writes instead, e.g. "--format json").
func (f csvFlags) misuse(what string) error {
	if f.comments || f.meta != "" {
		return usagef("--csv-comments and --meta apply to CSV output, not to %s", what)
	}
	return nil
}

// csvMeta is what a CSV file's metadata says: the lines a person reads
// (the '#' lines of --csv-comments, WARNING lines included) and the same
// facts as fields for a program.
type csvMeta struct {
	Command  string         // the subcommand, e.g. "predict"
	Contents string         // what one row is, e.g. "one row per model term"
	Lines    []string       // human-readable lines; may contain newlines
	Fields   map[string]any // structured facts; non-finite floats become null
}

// line appends human-readable lines.
func (m *csvMeta) line(format string, args ...any) {
	m.Lines = append(m.Lines, fmt.Sprintf(format, args...))
}

// set records a structured field.
func (m *csvMeta) set(key string, v any) {
	if m.Fields == nil {
		m.Fields = map[string]any{}
	}
	m.Fields[key] = v
}

// splitLines returns the human lines one per entry, multi-line entries
// split and blank ones dropped.
func (m *csvMeta) splitLines() []string {
	var out []string
	for _, l := range m.Lines {
		for _, s := range strings.Split(l, "\n") {
			if s = strings.TrimRight(s, " "); s != "" {
				out = append(out, s)
			}
		}
	}
	return out
}

// metaSidecarPath is the default sidecar of a CSV written to out: "" when
// out is stdout or not a regular file (a device has no "beside").
func metaSidecarPath(out string) string {
	if out == "" || out == "-" {
		return ""
	}
	if fi, err := os.Stat(out); err == nil && !fi.Mode().IsRegular() {
		return ""
	}
	return out + ".meta.json"
}

// writeCSVResult writes the CSV that body produces (header first, no
// comment lines) to out (stdout when "" or "-") and its metadata as the
// flags say. The whole CSV is produced and checked to parse before a byte
// is written, so a failure leaves every file as it was.
func writeCSVResult(env *runEnv, out string, f csvFlags, meta *csvMeta, body func(w io.Writer) error) error {
	var buf bytes.Buffer
	if err := body(&buf); err != nil {
		return err
	}
	header, rows, err := csvShape(buf.Bytes())
	if err != nil {
		return fmt.Errorf("internal error: %s output is not a CSV: %v", meta.Command, err)
	}
	if csvWrittenHook != nil {
		_, caller, _, _ := runtime.Caller(1)
		csvWrittenHook(filepath.Base(caller), meta, buf.Bytes())
	}
	sidecar := f.meta
	if sidecar != "" && out != "" && out != "-" && filepath.Clean(sidecar) == filepath.Clean(out) {
		return usagef("--meta %s is the output file itself; name another file", sidecar)
	}
	if sidecar == "" && !f.comments {
		sidecar = metaSidecarPath(out)
	}
	var side []byte
	if sidecar != "" {
		if side, err = meta.sidecarJSON(out, header, rows); err != nil {
			return err
		}
	}
	err = writeOutput(env, out, func(w io.Writer) error {
		if f.comments {
			for _, l := range meta.splitLines() {
				if _, err := io.WriteString(w, "# "+l+"\n"); err != nil {
					return err
				}
			}
		}
		_, err := w.Write(buf.Bytes())
		return err
	})
	if err != nil {
		return err
	}
	if def := metaSidecarPath(out); def != "" && filepath.Clean(def) != filepath.Clean(sidecar) {
		removeStaleSidecar(out)
	}
	if sidecar == "" {
		return nil
	}
	if err := writeFileAtomic(sidecar, func(w io.Writer) error { _, err := w.Write(side); return err }); err != nil {
		return fmt.Errorf("the CSV was written but its metadata was not: %w", err)
	}
	return nil
}

// removeStaleSidecar deletes the sidecar an earlier run left beside out
// when this run wrote none there (--csv-comments, or --meta elsewhere): it
// would describe another file. Only a sidecar warmfit wrote for that very file is removed.
func removeStaleSidecar(out string) {
	side := metaSidecarPath(out)
	if side == "" {
		return
	}
	b, err := os.ReadFile(side)
	if err != nil {
		return
	}
	var m struct {
		Command string `json:"command"`
		File    string `json:"file"`
	}
	if json.Unmarshal(b, &m) == nil && strings.HasPrefix(m.Command, "warmfit ") && m.File == filepath.Base(out) {
		os.Remove(side)
	}
}

// csvWrittenHook, when set (by the tests), sees every CSV body
// writeCSVResult is about to write, with the source file that called it:
// the tests check every writer's numbers against formats.md's rule.
var csvWrittenHook func(callerFile string, meta *csvMeta, body []byte)

// csvShape parses a whole CSV and returns its header and data-row count.
func csvShape(b []byte) ([]string, int, error) {
	r := csv.NewReader(bytes.NewReader(b))
	r.FieldsPerRecord = 0
	recs, err := r.ReadAll()
	if err != nil {
		return nil, 0, err
	}
	if len(recs) == 0 {
		return nil, 0, fmt.Errorf("no header")
	}
	return recs[0], len(recs) - 1, nil
}

// sidecarJSON renders the sidecar: fixed keys (command, file, columns,
// rows, contents, warnings, comments) plus the command's fields.
func (m *csvMeta) sidecarJSON(out string, header []string, rows int) ([]byte, error) {
	obj := map[string]any{}
	for k, v := range m.Fields {
		obj[k] = finiteJSON(v)
	}
	obj["command"] = "warmfit " + m.Command
	if out != "" && out != "-" {
		obj["file"] = filepath.Base(out)
	}
	obj["columns"] = header
	obj["rows"] = rows
	if m.Contents != "" {
		obj["contents"] = m.Contents
	}
	lines := m.splitLines()
	warnings := []string{}
	for _, l := range lines {
		if w, ok := strings.CutPrefix(l, "WARNING: "); ok {
			warnings = append(warnings, w)
		}
	}
	obj["warnings"] = warnings
	if lines == nil {
		lines = []string{}
	}
	obj["comments"] = lines
	var b bytes.Buffer
	enc := json.NewEncoder(&b)
	enc.SetEscapeHTML(false) // "beta < 0.02" stays readable
	enc.SetIndent("", "  ")
	if err := enc.Encode(obj); err != nil {
		return nil, fmt.Errorf("metadata of %s: %v", m.Command, err)
	}
	return b.Bytes(), nil
}

// finiteJSON replaces non-finite floats (at any depth of slices and
// string-keyed maps) by nil, so that no NaN reaches a sidecar.
func finiteJSON(v any) any {
	switch x := v.(type) {
	case float64:
		if math.IsNaN(x) || math.IsInf(x, 0) {
			return nil
		}
	case []float64:
		out := make([]any, len(x))
		for i, e := range x {
			out[i] = finiteJSON(e)
		}
		return out
	case map[string]any:
		out := make(map[string]any, len(x))
		for k, e := range x {
			out[k] = finiteJSON(e)
		}
		return out
	case []any:
		out := make([]any, len(x))
		for i, e := range x {
			out[i] = finiteJSON(e)
		}
		return out
	}
	return v
}

// tableMeta moves a table's comment lines into metadata, so that the
// table body is written without them.
func tableMeta(command, contents string, comments []string) *csvMeta {
	return &csvMeta{Command: command, Contents: contents, Lines: append([]string(nil), comments...)}
}
