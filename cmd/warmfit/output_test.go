package main

import (
	"bytes"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// writeChainModel writes a small valid model for the output tests.
func writeChainModel(t *testing.T, path string) []byte {
	t.Helper()
	code, _, stderr := runCmd("model", "--lattice", "chain:4", "--preset", "tfim", "--beta", "0.3", "-o", path)
	if code != 0 {
		t.Fatalf("model: exit %d: %s", code, stderr)
	}
	b, err := os.ReadFile(path)
	if err != nil {
		t.Fatal(err)
	}
	return b
}

func TestOutputRefusesInputs(t *testing.T) {
	dir := t.TempDir()
	m := filepath.Join(dir, "m.json")
	orig := writeChainModel(t, m)
	hard := filepath.Join(dir, "hard.json")
	if err := os.Link(m, hard); err != nil {
		t.Skip("no hard links:", err)
	}
	soft := filepath.Join(dir, "soft.json")
	if err := os.Symlink("m.json", soft); err != nil {
		t.Fatal(err)
	}
	other := filepath.Join(dir, "sub", "..", "m.json") // same file, another string
	os.Mkdir(filepath.Join(dir, "sub"), 0o755)
	for _, out := range []string{m, hard, soft, other} {
		for _, args := range [][]string{
			{"predict", "--model", m, "--order", "2", "-o", out},
			{"sample", "--model", m, "--shots", "10", "-o", out},
			{"sweep", "--model", m, "--beta-grid", "from=0.1,to=0.2,points=2", "--order", "2", "-o", out},
			{"plan", "--model", m, "--target", "0.1", "-o", out},
			{"fit", "--model", m, "--data", m, "-o", out},
			{"model", "--lattice", m, "--preset", "tfim", "-o", out},
			{"lattice", "--lattice", m, "-o", out},
			{"lattice", "--lattice", m, "--svg", out},
		} {
			code, _, stderr := runCmd(args...)
			if code != exitUsage || !strings.Contains(stderr, "refusing to overwrite an input") {
				t.Errorf("%v: exit %d, want %d with a refusal; stderr:\n%s", args, code, exitUsage, stderr)
			}
		}
	}
	if got, _ := os.ReadFile(m); !bytes.Equal(got, orig) {
		t.Fatal("the input changed")
	}
}

func TestOutputMissingDirectoryBeforeWork(t *testing.T) {
	dir := t.TempDir()
	m := filepath.Join(dir, "m.json")
	writeChainModel(t, m)
	out := filepath.Join(dir, "nowhere", "e.csv")
	start := time.Now()
	code, _, stderr := runCmd("predict", "--model", m, "--order", "2", "-o", out)
	if code != exitUsage || !strings.Contains(stderr, filepath.Join(dir, "nowhere")) {
		t.Fatalf("exit %d, want %d naming the directory; stderr:\n%s", code, exitUsage, stderr)
	}
	if strings.Contains(stderr, "expansion:") {
		t.Errorf("the work ran before the refusal (%v):\n%s", time.Since(start), stderr)
	}
	if os.Getuid() != 0 { // root writes anywhere
		ro := filepath.Join(dir, "ro")
		os.Mkdir(ro, 0o555)
		code, _, stderr = runCmd("predict", "--model", m, "--order", "2", "-o", filepath.Join(ro, "e.csv"))
		if code != exitUsage || !strings.Contains(stderr, ro) {
			t.Fatalf("read-only directory: exit %d; stderr:\n%s", code, stderr)
		}
	}
}

func TestOutputTargets(t *testing.T) {
	dir := t.TempDir()
	m := filepath.Join(dir, "m.json")
	writeChainModel(t, m)
	predict := func(out string) (int, string, string) {
		return runCmd("predict", "--model", m, "--order", "2", "-o", out)
	}

	// -o - is stdout.
	code, stdout, stderr := predict("-")
	if code != 0 || !strings.Contains(stdout, "pauli,sites,value") {
		t.Fatalf("-o -: exit %d, stdout %q, stderr %s", code, stdout, stderr)
	}

	// /dev/stdout, whatever stands behind it (here a pipe or a file), is
	// accepted before the work.
	if err := checkOutputs([]outputFile{{"-o", "/dev/stdout"}, {"--meta", "/dev/stderr"}}); err != nil {
		t.Errorf("/dev/stdout refused: %v", err)
	}

	// /dev/null stays a device.
	if code, _, stderr := predict(os.DevNull); code != 0 {
		t.Fatalf("/dev/null: exit %d: %s", code, stderr)
	}
	if fi, err := os.Stat(os.DevNull); err != nil || fi.Mode().IsRegular() {
		t.Fatalf("/dev/null was replaced: %v %v", fi.Mode(), err)
	}

	// A named pipe is written through, not replaced.
	fifo := filepath.Join(dir, "fifo")
	if err := syscall.Mkfifo(fifo, 0o644); err == nil {
		got := make(chan []byte, 1)
		go func() {
			f, err := os.Open(fifo)
			if err != nil {
				got <- nil
				return
			}
			b, _ := io.ReadAll(f)
			f.Close()
			got <- b
		}()
		if code, _, stderr := predict(fifo); code != 0 {
			t.Fatalf("fifo: exit %d: %s", code, stderr)
		}
		if b := <-got; !bytes.Contains(b, []byte("pauli,sites,value")) {
			t.Errorf("fifo reader got %q", b)
		}
		if fi, _ := os.Lstat(fifo); fi.Mode()&os.ModeNamedPipe == 0 {
			t.Errorf("the fifo was replaced by %v", fi.Mode())
		}
	}

	// A symlink writes its target and stays a link; permission bits stay.
	target := filepath.Join(dir, "target.csv")
	os.WriteFile(target, []byte("old\n"), 0o600)
	link := filepath.Join(dir, "link.csv")
	os.Symlink("target.csv", link)
	if code, _, stderr := predict(link); code != 0 {
		t.Fatalf("symlink: exit %d: %s", code, stderr)
	}
	if li, _ := os.Lstat(link); li.Mode()&os.ModeSymlink == 0 {
		t.Error("the symlink was replaced by a file")
	}
	b, _ := os.ReadFile(target)
	if !bytes.Contains(b, []byte("pauli,sites,value")) {
		t.Errorf("the link's target was not written: %q", b)
	}
	if fi, _ := os.Stat(target); fi.Mode().Perm() != 0o600 {
		t.Errorf("permission bits %v, want 0600 kept", fi.Mode().Perm())
	}

	// A dangling link creates its target.
	dangling := filepath.Join(dir, "dangling.csv")
	os.Symlink("made.csv", dangling)
	if code, _, stderr := predict(dangling); code != 0 {
		t.Fatalf("dangling symlink: exit %d: %s", code, stderr)
	}
	if _, err := os.Stat(filepath.Join(dir, "made.csv")); err != nil {
		t.Errorf("dangling link target not created: %v", err)
	}

	// No temporary file is left behind anywhere.
	entries, _ := os.ReadDir(dir)
	for _, e := range entries {
		if strings.Contains(e.Name(), ".tmp") || strings.Contains(e.Name(), "probe") {
			t.Errorf("left behind: %s", e.Name())
		}
	}
}

// TestOutputInterruptRemovesTemp runs a child process that blocks in the
// middle of a write, sends it SIGTERM and SIGINT, and checks that the
// temporary file is gone, the old file is intact and the exit is non-zero.
func TestOutputInterruptRemovesTemp(t *testing.T) {
	if dir := os.Getenv("WARMFIT_TEST_INTERRUPT_DIR"); dir != "" {
		target := filepath.Join(dir, "out.csv")
		writeFileAtomic(target, func(w io.Writer) error {
			fmt.Fprintln(w, "partial")
			w.(interface{ Flush() error }).Flush()
			fmt.Println("writing")
			time.Sleep(time.Minute)
			return nil
		})
		os.Exit(0)
	}
	for _, sig := range []syscall.Signal{syscall.SIGTERM, syscall.SIGINT} {
		dir := t.TempDir()
		target := filepath.Join(dir, "out.csv")
		os.WriteFile(target, []byte("old\n"), 0o644)
		cmd := exec.Command(os.Args[0], "-test.run=^TestOutputInterruptRemovesTemp$")
		cmd.Env = append(os.Environ(), "WARMFIT_TEST_INTERRUPT_DIR="+dir)
		stdout, _ := cmd.StdoutPipe()
		if err := cmd.Start(); err != nil {
			t.Fatal(err)
		}
		buf := make([]byte, 64)
		n, _ := stdout.Read(buf) // "writing": the temporary file exists now
		if !strings.Contains(string(buf[:n]), "writing") {
			t.Fatalf("child said %q", buf[:n])
		}
		cmd.Process.Signal(sig)
		err := cmd.Wait()
		if err == nil {
			t.Errorf("%v: the child exited 0", sig)
		}
		entries, _ := os.ReadDir(dir)
		if len(entries) != 1 {
			var names []string
			for _, e := range entries {
				names = append(names, e.Name())
			}
			t.Errorf("%v: directory holds %v, want only out.csv", sig, names)
		}
		if b, _ := os.ReadFile(target); string(b) != "old\n" {
			t.Errorf("%v: the old file became %q", sig, b)
		}
	}
}
