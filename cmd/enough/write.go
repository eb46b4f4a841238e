package main

import (
	"bytes"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"math/rand/v2"
	"os"
	"path/filepath"
)

// How -o writes (emit, in plan.go, and the functions below; README,
// "Output files"):
//
//   - A regular file is replaced whole, through a temporary file in the
//     same directory and a rename: no reader ever sees half a plan, and a
//     failure leaves the old file as it was and no temporary file behind.
//     An existing file keeps its permission bits; a new one gets 0666 less
//     the umask, as files made by the shell's > do.
//   - A symbolic link is followed, always: the file it names is written,
//     and created when it does not exist yet (a dangling link), while the
//     link itself stays.
//   - A device or a named pipe (such as /dev/stdout) is written in place.
//   - A directory is refused (exit status 1), and so is the specification
//     being planned (exit status 2, before any work: outputIsInput).

// maxLinks bounds the symbolic links followed from an output path, as the
// kernel bounds them when it opens a file (Linux: 40).
const maxLinks = 40

// errLinkLoop says that an output path's links do not end in a file.
var errLinkLoop = errors.New("too many symbolic links (a loop?)")

// followLinks returns the path at the end of the symbolic links from path:
// path itself when it is no link or does not exist, else the file the last
// link names, which need not exist. The directories on the way are
// resolved too, so that a link's relative target (../x) is read from the
// directory the link really is in.
func followLinks(path string) (string, error) {
	for range maxLinks {
		if dir, err := filepath.EvalSymlinks(filepath.Dir(path)); err == nil {
			path = filepath.Join(dir, filepath.Base(path))
		}
		st, err := os.Lstat(path)
		if err != nil || st.Mode()&fs.ModeSymlink == 0 {
			return path, nil
		}
		dest, err := os.Readlink(path)
		if err != nil {
			return "", err
		}
		if !filepath.IsAbs(dest) {
			dest = filepath.Join(filepath.Dir(path), dest)
		}
		path = dest
	}
	return "", errLinkLoop
}

// writeAtomic writes data to path, following its symbolic links (see
// followLinks), through a temporary file in the same directory and a
// rename, so that no reader ever sees a partial file and a failure leaves
// no file behind. The file replaced keeps its permission bits; a new file
// gets 0666 less the umask.
func writeAtomic(path string, data []byte) (err error) {
	link := path
	path, err = followLinks(path)
	if err != nil {
		return err
	}
	if _, derr := os.Stat(filepath.Dir(path)); path != link && errors.Is(derr, fs.ErrNotExist) {
		return fmt.Errorf("it is a symbolic link to %s, whose directory does not exist", path)
	}
	keep := fs.FileMode(0)
	if st, err := os.Stat(path); err == nil {
		keep = st.Mode().Perm()
	}
	f, err := createTemp(filepath.Dir(path), "."+filepath.Base(path)+".tmp-")
	if err != nil {
		return err
	}
	tmp := f.Name()
	defer func() {
		if err != nil {
			f.Close()
			os.Remove(tmp)
		}
	}()
	if _, err = bytes.NewReader(data).WriteTo(f); err != nil {
		return err
	}
	if err = f.Sync(); err != nil {
		return err
	}
	if err = f.Close(); err != nil {
		return err
	}
	if keep != 0 {
		if err = os.Chmod(tmp, keep); err != nil {
			return err
		}
	}
	return os.Rename(tmp, path)
}

// createTemp creates a new file named prefix and a random number in dir,
// with permission 0666 less the umask (os.CreateTemp always gives 0600,
// which would leave a new plan unreadable to the group the umask lets
// read it).
func createTemp(dir, prefix string) (f *os.File, err error) {
	for range 1000 {
		name := filepath.Join(dir, fmt.Sprintf("%s%08x", prefix, rand.Uint32()))
		f, err = os.OpenFile(name, os.O_RDWR|os.O_CREATE|os.O_EXCL, 0o666)
		if !errors.Is(err, fs.ErrExist) {
			break
		}
	}
	return f, err
}

// outputIsInput refuses an output file that is the specification being
// planned (the same file, by any path, link or hard link), which the plan
// would replace: a flag problem (exit status 2), found before any work.
// spec is the specification's path ("" for the embedded demo, "-" for
// standard input, whose file is compared when it is one).
func outputIsInput(output, spec string, stdin io.Reader) error {
	return fileIsInput("--output", output, spec, stdin)
}

// plotIsInput refuses a --plot file that is the specification being
// planned, as outputIsInput refuses -o, or the file -o writes (the same
// path, or the same file by another name): one output would replace the
// other.
func plotIsInput(plot, output, spec string, stdin io.Reader) error {
	if plot == "" {
		return nil
	}
	if err := fileIsInput("--plot", plot, spec, stdin); err != nil {
		return err
	}
	if output == "" {
		return nil
	}
	same := filepath.Clean(plot) == filepath.Clean(output)
	if a, err := os.Stat(plot); err == nil {
		if b, err := os.Stat(output); err == nil && os.SameFile(a, b) {
			same = true
		}
	}
	if same {
		return &flagError{flag: "--plot " + plot, msg: "is the file --output writes: one would replace the other", allowed: "another file name"}
	}
	return nil
}

// fileIsInput is outputIsInput for the file a flag names.
func fileIsInput(flag, output, spec string, stdin io.Reader) error {
	if output == "" || spec == "" {
		return nil
	}
	out, err := os.Stat(output)
	if err != nil || !out.Mode().IsRegular() {
		return nil
	}
	var in fs.FileInfo
	what := "the specification itself"
	if spec == "-" {
		f, ok := stdin.(*os.File)
		if !ok {
			return nil
		}
		in, err = f.Stat()
		what = "the specification read from standard input"
	} else {
		in, err = os.Stat(spec)
		if spec != output {
			what = "the specification " + spec + " itself, under another name"
		}
	}
	if err != nil || !os.SameFile(in, out) {
		return nil
	}
	return &flagError{flag: flag + " " + output,
		msg:     "is " + what + ": the output would replace it",
		allowed: "another file name"}
}
