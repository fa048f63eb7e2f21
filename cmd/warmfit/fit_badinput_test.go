package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
)

// The bad inputs a new user writes get messages that name the file, the
// line and the field, and say what to do (issue 9). The fit template is
// the 4-site chain with 7 terms; nothing is written on failure.
func TestFitBadInputMessages(t *testing.T) {
	dir := t.TempDir()
	const h = "pauli,sites,value,stderr\n"
	all := "ZZ,0 1,0.1,0.01\nZZ,1 2,0.1,0.01\nZZ,2 3,0.1,0.01\nX,0,0.1,0.01\nX,1,0.1,0.01\nX,2,0.1,0.01\n"
	write := func(name, body string) string {
		path := filepath.Join(dir, name)
		if err := os.WriteFile(path, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		return path
	}
	out := filepath.Join(dir, "never.json")
	for _, tc := range []struct {
		name string
		file string
		body string
		args []string
		code int
		want []string
	}{
		{"comma sites", "comma.csv", h + "ZZ,0,1,0.5,0.01\n", nil, exitFailure,
			[]string{`comma.csv:2: field "sites": "0,1" looks like sites separated by commas`, `as in "0 1"`}},
		{"semicolon sites", "semicolon.csv", h + "X,0,0.1,0.01\nZZ,0;1,0.5,0.01\n", nil, exitFailure,
			[]string{`semicolon.csv:3: field "sites": "0;1": separate sites by spaces, as in "0 1"`}},
		{"site beyond the lattice", "beyond.csv", h + all + "X,7,0.1,0.01\n", nil, exitFailure,
			[]string{`beyond.csv:8: field "sites": term X 7: site 7 is beyond the lattice chain:4`, "which has 4 sites (0..3)"}},
		{"no usable data", "few.csv", h + all, nil, exitFailure,
			[]string{"few.csv: 1 of 7 terms (1 X) have no usable data: X 3 (not in the table)", "What to do: add rows for them to the table", "drop them from the template", `"group"`}},
		{"beta 0", "ok.csv", h + all + "X,3,0.1,0.01\n", []string{"--beta", "0"}, exitUsage,
			[]string{`"0" is not a positive finite number, so not an inverse temperature`, "to fit at unknown temperature, leave --beta out", "beta*lambda"}},
		{"beta auto", "ok.csv", h + all + "X,3,0.1,0.01\n", []string{"--beta", "auto"}, exitUsage,
			[]string{`"auto" is not a positive finite number, so not an inverse temperature`, "to fit at unknown temperature, leave --beta out"}},
	} {
		t.Run(tc.name, func(t *testing.T) {
			data := write(tc.file, tc.body)
			args := append([]string{"fit", "--model", fitTemplate, "--data", data, "--order", "4", "-o", out}, tc.args...)
			code, _, errs := runCmd(args...)
			if code != tc.code {
				t.Errorf("exit %d, want %d\n%s", code, tc.code, errs)
			}
			for _, w := range tc.want {
				if !strings.Contains(errs, w) {
					t.Errorf("stderr lacks %q:\n%s", w, errs)
				}
			}
			if _, err := os.Stat(out); !os.IsNotExist(err) {
				t.Errorf("a failed fit wrote %s", out)
			}
		})
	}
	// Other commands: leaving --beta out means the model's beta.
	if code, _, errs := runCmd("predict", "--model", fitTemplate, "--beta", "0"); code != exitUsage || !strings.Contains(errs, "leave --beta out to use the model file's beta") {
		t.Errorf("predict --beta 0: exit %d\n%s", code, errs)
	}
}
