//go:build unix

package main

import (
	"bytes"
	"errors"
	"io/fs"
	"os"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
)

// TestWriteModes checks that a file replaced keeps its permission bits and
// that a new one gets 0666 less the umask, as a file made by the shell's >
// does (POSIX open(2): the mode is masked by the process's umask).
func TestWriteModes(t *testing.T) {
	for _, tc := range []struct {
		name  string
		old   fs.FileMode // 0: no file yet
		umask int
		want  fs.FileMode
	}{
		{"new, umask 022", 0, 0o022, 0o644},
		{"new, umask 027", 0, 0o027, 0o640},
		{"new, umask 077", 0, 0o077, 0o600},
		{"new, umask 002", 0, 0o002, 0o664},
		{"existing 0600, umask 022", 0o600, 0o022, 0o600},
		{"existing 0640, umask 077", 0o640, 0o077, 0o640},
		{"existing 0755, umask 022", 0o755, 0o022, 0o755},
		{"existing 0444, umask 022", 0o444, 0o022, 0o444},
		{"existing 0666, umask 022", 0o666, 0o022, 0o666},
	} {
		t.Run(tc.name, func(t *testing.T) {
			path := filepath.Join(t.TempDir(), "plan.md")
			if tc.old != 0 {
				if err := os.WriteFile(path, []byte("old"), 0o600); err != nil {
					t.Fatal(err)
				}
				if err := os.Chmod(path, tc.old); err != nil {
					t.Fatal(err)
				}
			}
			old := syscall.Umask(tc.umask)
			err := emit(nil, path, []byte("new"))
			syscall.Umask(old)
			if err != nil {
				t.Fatal(err)
			}
			st, err := os.Stat(path)
			if err != nil {
				t.Fatal(err)
			}
			if got := st.Mode().Perm(); got != tc.want {
				t.Errorf("mode %04o, want %04o", got, tc.want)
			}
			if data, _ := os.ReadFile(path); string(data) != "new" {
				t.Errorf("content %q, want %q", data, "new")
			}
		})
	}
}

// TestWriteLinks checks that -o follows symbolic links, always: the file a
// link names is written (created when missing) and the link stays, however
// many links and whatever relative paths lead there; a loop or a link into
// a missing directory is a failure naming the output, and leaves nothing.
func TestWriteLinks(t *testing.T) {
	type link struct{ name, to string }
	for _, tc := range []struct {
		name    string
		dirs    []string
		files   []string // existing files, holding "old"
		links   []link
		output  string
		written string // the file that must hold the plan; "" on failure
		fail    string // in the error
	}{
		{name: "live link", files: []string{"target.md"}, links: []link{{"link.md", "target.md"}},
			output: "link.md", written: "target.md"},
		{name: "dangling link", links: []link{{"link.md", "target.md"}},
			output: "link.md", written: "target.md"},
		{name: "chain of links", files: []string{"target.md"}, links: []link{{"a.md", "b.md"}, {"b.md", "target.md"}},
			output: "a.md", written: "target.md"},
		{name: "dangling chain", links: []link{{"a.md", "b.md"}, {"b.md", "target.md"}},
			output: "a.md", written: "target.md"},
		{name: "relative link from a subdirectory", dirs: []string{"sub", "out"}, links: []link{{"sub/link.md", "../out/plan.md"}},
			output: "sub/link.md", written: "out/plan.md"},
		{name: "link through a linked directory", dirs: []string{"real/deep"}, links: []link{{"dir", "real/deep"}, {"real/deep/link.md", "../plan.md"}},
			output: "dir/link.md", written: "real/plan.md"},
		{name: "absolute link", dirs: []string{"out"}, links: []link{{"link.md", "ABS/out/plan.md"}},
			output: "link.md", written: "out/plan.md"},
		{name: "loop", links: []link{{"a.md", "b.md"}, {"b.md", "a.md"}},
			output: "a.md", fail: "too many symbolic links"},
		{name: "dangling link into a missing directory", links: []link{{"link.md", "missing/plan.md"}},
			output: "link.md", fail: "symbolic link to"},
		{name: "link to a directory", dirs: []string{"out"}, links: []link{{"link", "out"}},
			output: "link", fail: "it is a directory"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			dir := t.TempDir()
			for _, d := range tc.dirs {
				if err := os.MkdirAll(filepath.Join(dir, d), 0o755); err != nil {
					t.Fatal(err)
				}
			}
			for _, f := range tc.files {
				if err := os.WriteFile(filepath.Join(dir, f), []byte("old"), 0o644); err != nil {
					t.Fatal(err)
				}
			}
			for _, l := range tc.links {
				if err := os.Symlink(strings.Replace(l.to, "ABS", dir, 1), filepath.Join(dir, l.name)); err != nil {
					t.Fatal(err)
				}
			}
			err := emit(nil, filepath.Join(dir, tc.output), []byte("plan"))
			if tc.fail != "" {
				var oe *outputError
				if !errors.As(err, &oe) || !strings.Contains(err.Error(), tc.fail) {
					t.Fatalf("got %v, want an *outputError saying %q", err, tc.fail)
				}
				if exitCode(err) != ExitFailure {
					t.Errorf("exit status %d, want %d", exitCode(err), ExitFailure)
				}
				if tmp, _ := filepath.Glob(filepath.Join(dir, "*", ".*.tmp-*")); len(tmp) > 0 {
					t.Errorf("temporary files left: %v", tmp)
				}
				return
			}
			if err != nil {
				t.Fatal(err)
			}
			if data, err := os.ReadFile(filepath.Join(dir, tc.written)); err != nil || string(data) != "plan" {
				t.Errorf("%s holds %q (%v), want the plan", tc.written, data, err)
			}
			for _, l := range tc.links {
				if st, err := os.Lstat(filepath.Join(dir, l.name)); err != nil || st.Mode()&fs.ModeSymlink == 0 {
					t.Errorf("%s is no longer a link (%v)", l.name, err)
				}
			}
		})
	}
}

// TestOutputIsInput checks that an output naming the specification being
// planned, by any path, is refused as a flag problem (exit status 2),
// while any other file, a missing one, the embedded demo and a standard
// input that is no file are let through.
func TestOutputIsInput(t *testing.T) {
	dir := t.TempDir()
	at := func(name string) string { return filepath.Join(dir, name) }
	for _, f := range []string{"spec.yaml", "other.md"} {
		if err := os.WriteFile(at(f), []byte("version: 1\n"), 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if err := os.Symlink("spec.yaml", at("link.yaml")); err != nil {
		t.Fatal(err)
	}
	if err := os.Link(at("spec.yaml"), at("hard.yaml")); err != nil {
		t.Fatal(err)
	}
	stdin, err := os.Open(at("spec.yaml"))
	if err != nil {
		t.Fatal(err)
	}
	defer stdin.Close()
	for _, tc := range []struct {
		name, output, spec string
		in                 any
		refused            string // in the refusal; "" when let through
	}{
		{"the same path", at("spec.yaml"), at("spec.yaml"), nil, "is the specification itself"},
		{"another spelling", dir + "/./spec.yaml", at("spec.yaml"), nil, "under another name"},
		{"a link to it", at("link.yaml"), at("spec.yaml"), nil, "under another name"},
		{"read through a link", at("spec.yaml"), at("link.yaml"), nil, "under another name"},
		{"a hard link", at("hard.yaml"), at("spec.yaml"), nil, "under another name"},
		{"standard input from it", at("spec.yaml"), "-", stdin, "read from standard input"},
		{"another file", at("other.md"), at("spec.yaml"), nil, ""},
		{"a new file", at("new.md"), at("spec.yaml"), nil, ""},
		{"no output", "", at("spec.yaml"), nil, ""},
		{"the embedded demo", at("spec.yaml"), "", nil, ""},
		{"standard input from no file", at("spec.yaml"), "-", bytes.NewReader(nil), ""},
		{"a missing specification", at("other.md"), at("missing.yaml"), nil, ""},
	} {
		t.Run(tc.name, func(t *testing.T) {
			in, _ := tc.in.(interface{ Read([]byte) (int, error) })
			err := outputIsInput(tc.output, tc.spec, in)
			if tc.refused == "" {
				if err != nil {
					t.Fatalf("refused: %v", err)
				}
				return
			}
			if err == nil || !strings.Contains(err.Error(), tc.refused) {
				t.Fatalf("got %v, want a refusal saying %q", err, tc.refused)
			}
			if exitCode(err) != ExitInput {
				t.Errorf("exit status %d, want %d", exitCode(err), ExitInput)
			}
		})
	}
}

// failWriter fails every write, as a full disk or a closed descriptor
// does.
type failWriter struct{ err error }

func (w failWriter) Write([]byte) (int, error) { return 0, w.err }

// TestEmitStandardOutputFailure checks that output that cannot be written
// to standard output is a failure (exit status 1), never a success.
func TestEmitStandardOutputFailure(t *testing.T) {
	for _, cause := range []error{syscall.EBADF, syscall.ENOSPC, syscall.EPIPE, syscall.EIO} {
		err := emit(failWriter{&fs.PathError{Op: "write", Path: "/dev/stdout", Err: cause}}, "", []byte("plan"))
		if err == nil {
			t.Fatalf("%v: reported success", cause)
		}
		if exitCode(err) != ExitFailure {
			t.Errorf("%v: exit status %d, want %d", cause, exitCode(err), ExitFailure)
		}
	}
}
