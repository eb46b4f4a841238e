package designs

import (
	"errors"
	"runtime"
	"strings"
	"testing"
	"time"
)

// oneMiB is the size of the long keys and values below: the largest file
// Parse reads (MaxSpecBytes), and a --set value of the same size.
const oneMiB = 1 << 20

// Bounds of the cost of refusing a 1 MiB key or value. Before keys were
// clipped and suggestions skipped for long words, a 1 MiB key took 6 s and
// 342 MB (an edit distance against every key, issue 9, item 11); now such
// a refusal takes about 10 ms and allocates a small multiple of the input.
// The bounds are far above that and far below the failure, so that a
// loaded machine or the race detector does not trip them while a return of
// the quadratic cost does: the time bound is the fuzz targets' budget per
// input, and the figures themselves live in BenchmarkParseLongKey.
const (
	longBudget   = 2 * time.Second
	longMaxAlloc = 64 << 20 // bytes allocated by one Parse
	longMaxLine  = 400      // bytes of one line of the error
)

// longCases are specifications and overrides with a 1 MiB key or value in
// every place a key or value is echoed or matched against the known keys.
func longCases() []struct {
	name string
	data string
	sets []string
	want string // in the error
} {
	head := "version: 1\ndesign: trial\ncontrol_risk: 0.2\nrisk_ratio: 0.75\npower: 0.8\n"
	// fill returns a word of about n bytes made of unit, so that a file
	// holding it stays within MaxSpecBytes.
	fill := func(unit string, n int) string { return strings.Repeat(unit, n/len(unit)) }
	room := oneMiB - len(head) - 64
	return []struct {
		name string
		data string
		sets []string
		want string
	}{
		{"file: explicit key", head + "? " + fill("k", room) + "\n: 1\n", nil, "unknown key"},
		{"file: explicit key near alpha", head + "? " + fill("alphx", room) + "\n: 1\n", nil, "unknown key"},
		{"file: plain key", fill("k", room) + ": 1\n", nil, "a key of more than 1024 characters"},
		{"file: plain key after others", head + fill("alpha", room) + ": 1\n", nil, "a key of more than 1024 characters"},
		{"file: cluster key", head + "cluster:\n  ? " + fill("s", room) + "\n  : 1\n", nil, "unknown key"},
		{"file: sources key", head + "sources:\n  ? " + fill("s", room) + "\n  : x\n", nil, "names no key"},
		{"file: simulate key", head + "simulate:\n  ? " + fill("r", room) + "\n  : 1\n", nil, "unknown key"},
		{"file: choice value", "version: 1\ndesign: " + fill("trial", room) + "\n", nil, "is not allowed"},
		{"file: number value", head + "alpha: x" + fill("9", room) + "\n", nil, "is not a number"},
		{"file: whole value", head + "sides: " + fill("9", room) + "\n", nil, "sides"},
		{"file: quoted number", head + "alpha: \"" + fill("0", room) + "\"\n", nil, "is not a number"},
		{"set: key", head, []string{fill("k", oneMiB) + "=1"}, "unknown key"},
		{"set: key near alpha", head, []string{fill("alphx", oneMiB) + "=1"}, "unknown key"},
		{"set: dotted key", head, []string{"cluster." + fill("s", oneMiB) + "=1"}, "unknown key"},
		{"set: sources key", head, []string{"sources." + fill("s", oneMiB) + "=x"}, "names no key"},
		{"set: choice value", head, []string{"design=" + fill("trial", oneMiB)}, "is not allowed"},
		{"set: number value", head, []string{"alpha=" + fill("9", oneMiB)}, "alpha"},
		{"set: not YAML", head, []string{"alpha=[" + fill("9", oneMiB)}, "not valid YAML"},
		{"set: no equals sign", head, []string{fill("k", oneMiB)}, "key=value"},
		{"set: second document", head, []string{"alpha=0.05\n---\n" + fill("9", oneMiB)}, "second YAML document"},
	}
}

// TestLongKeysAndValuesCheap checks that a specification or an override
// holding a 1 MiB key or value is refused quickly, with little memory,
// with each line of the error clipped to a readable length.
func TestLongKeysAndValuesCheap(t *testing.T) {
	for _, tc := range longCases() {
		t.Run(tc.name, func(t *testing.T) {
			if len(tc.data) > MaxSpecBytes {
				t.Fatalf("the case's file has %d bytes, more than MaxSpecBytes", len(tc.data))
			}
			var before, after runtime.MemStats
			runtime.ReadMemStats(&before)
			start := time.Now()
			_, err := Parse("long.yaml", []byte(tc.data), tc.sets)
			took := time.Since(start)
			runtime.ReadMemStats(&after)
			if err == nil {
				t.Fatal("accepted; want a refusal")
			}
			if len(AllSpecErrors(err)) == 0 {
				t.Fatalf("error %T is no *SpecError or SpecErrors", err)
			}
			if !strings.Contains(err.Error(), tc.want) {
				t.Errorf("error does not say %q:\n%.2000s", tc.want, err)
			}
			for _, line := range strings.Split(err.Error(), "\n") {
				if len(line) > longMaxLine {
					t.Errorf("a line of %d bytes (at most %d): %.300s…", len(line), longMaxLine, line)
				}
			}
			if took > longBudget {
				t.Errorf("took %v, more than %v", took, longBudget)
			}
			if got := after.TotalAlloc - before.TotalAlloc; got > longMaxAlloc {
				t.Errorf("allocated %d MiB, more than %d MiB", got>>20, longMaxAlloc>>20)
			}
		})
	}
}

// TestNearestSkipsLongWords checks the guard that keeps suggestions cheap:
// no suggestion is sought for a word longer than maxSuggestLen, however
// close to a key its start is.
func TestNearestSkipsLongWords(t *testing.T) {
	keys := allKeys()
	for _, tc := range []struct {
		word string
		want bool
	}{
		{"alpah", true},
		{strings.Repeat("a", maxSuggestLen), false},
		{"alpha" + strings.Repeat(" ", maxSuggestLen), false},
		{"alpha" + strings.Repeat("x", oneMiB), false},
	} {
		_, ok := nearest(tc.word, keys)
		if ok != tc.want {
			t.Errorf("nearest(%.20q…) suggests: %v, want %v", tc.word, ok, tc.want)
		}
	}
}

// TestClip checks that an echoed key or value keeps maxEcho characters,
// counted in letters rather than bytes, and marks the cut.
func TestClip(t *testing.T) {
	for _, tc := range []struct {
		in, want string
	}{
		{"alpha", "alpha"},
		{strings.Repeat("a", maxEcho), strings.Repeat("a", maxEcho)},
		{strings.Repeat("a", maxEcho+1), strings.Repeat("a", maxEcho) + "…"},
		{strings.Repeat("é", oneMiB), strings.Repeat("é", maxEcho) + "…"},
	} {
		if got := clip(tc.in); got != tc.want {
			t.Errorf("clip(%.20q…) = %.80q, want %.80q", tc.in, got, tc.want)
		}
	}
}

// BenchmarkParseLongKey measures the refusal of the longest key a file
// may hold and of a 1 MiB key on the command line.
func BenchmarkParseLongKey(b *testing.B) {
	for _, name := range []string{"file: explicit key near alpha", "set: key near alpha"} {
		var data string
		var sets []string
		for _, tc := range longCases() {
			if tc.name == name {
				data, sets = tc.data, tc.sets
			}
		}
		b.Run(strings.NewReplacer(": ", "_", " ", "_").Replace(name), func(b *testing.B) {
			b.ReportAllocs()
			for b.Loop() {
				_, err := Parse("long.yaml", []byte(data), sets)
				var se *SpecError
				if !errors.As(err, &se) {
					b.Fatalf("got %v, want a *SpecError", err)
				}
			}
		})
	}
}
