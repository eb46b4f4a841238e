package sweep

import (
	"errors"
	"fmt"
	"math"
	"slices"
	"strconv"
	"strings"
	"testing"
)

// TestParseVary reads lists and ranges. The expected values are the
// decimals written (arithmetic, common practice): a range FROM:TO:STEP
// holds FROM + i·STEP as the decimal it stands for, with TO when it lies
// on the range.
func TestParseVary(t *testing.T) {
	for _, tc := range []struct {
		arg   string
		key   string
		texts []string
	}{
		{"risk_ratio=0.6,0.7,0.8", "risk_ratio", []string{"0.6", "0.7", "0.8"}},
		{" risk_ratio = 0.6 , 0.70 ,0.8 ", "risk_ratio", []string{"0.6", "0.7", "0.8"}},
		{"cluster.icc=0.01,0.05", "cluster.icc", []string{"0.01", "0.05"}},
		{"simulate.n=100,200", "simulate.n", []string{"100", "200"}},
		{"n=1e6,2.5e-7", "n", []string{"1000000", "2.5e-07"}},
		{"power=0.8", "power", []string{"0.8"}},
		{"alpha=0.1:1:0.1", "alpha", []string{"0.1", "0.2", "0.3", "0.4", "0.5", "0.6", "0.7", "0.8", "0.9", "1"}},
		{"n=100:200:50", "n", []string{"100", "150", "200"}},
		{"x=1:0:-0.25", "x", []string{"1", "0.75", "0.5", "0.25", "0"}},
		{"x=0:1:0.3", "x", []string{"0", "0.3", "0.6", "0.9"}},
		{"x=0.05:0.5:0.05", "x", []string{"0.05", "0.1", "0.15", "0.2", "0.25", "0.3", "0.35", "0.4", "0.45", "0.5"}},
		{"x=1e-3:5e-3:1e-3", "x", []string{"0.001", "0.002", "0.003", "0.004", "0.005"}},
		{"x=-0.2:0.2:0.1", "x", []string{"-0.2", "-0.1", "0", "0.1", "0.2"}},
		{"x=0.7:0.7:0.1", "x", []string{"0.7"}},
		{"x=5:5:-1", "x", []string{"5"}},
		{"x=0.1:0.35:0.125", "x", []string{"0.1", "0.225", "0.35"}},
	} {
		t.Run(tc.arg, func(t *testing.T) {
			a, err := ParseVary(tc.arg)
			if err != nil {
				t.Fatal(err)
			}
			if a.Key != tc.key || !slices.Equal(a.Texts, tc.texts) {
				t.Fatalf("key %q, texts %q; want %q, %q", a.Key, a.Texts, tc.key, tc.texts)
			}
			for i, text := range tc.texts {
				want, _ := strconv.ParseFloat(text, 64)
				if a.Values[i] != want {
					t.Errorf("value %d is %v, want %v, the decimal %s", i, a.Values[i], want, text)
				}
			}
		})
	}
}

// TestParseVaryDoesNotDrift: a long range with a step that binary cannot
// hold holds exactly the decimals FROM + i·STEP, however far it goes, where
// a running sum would drift away from them.
func TestParseVaryDoesNotDrift(t *testing.T) {
	for _, tc := range []struct {
		arg      string
		from     float64
		step     string
		n        int
		decimals int
	}{
		{"risk_ratio=0.5:0.9:0.004", 0.5, "0.004", 101, 3},
		{"control_risk=0.01:0.99:0.01", 0.01, "0.01", 99, 2},
		{"sd=0.1:100:0.1", 0.1, "0.1", 1000, 1},
		{"x=0:1:0.0001", 0, "0.0001", 10001, 4},
	} {
		a, err := ParseVary(tc.arg)
		if err != nil {
			t.Fatal(err)
		}
		if len(a.Values) != tc.n {
			t.Fatalf("%s: %d values, want %d", tc.arg, len(a.Values), tc.n)
		}
		step, _ := strconv.ParseFloat(tc.step, 64)
		sum, drifted := tc.from, false
		for i, x := range a.Values {
			text := strconv.FormatFloat(tc.from+float64(i)*step, 'f', tc.decimals, 64)
			want, _ := strconv.ParseFloat(text, 64)
			if x != want || a.Texts[i] != strconv.FormatFloat(want, 'f', -1, 64) {
				t.Fatalf("%s: value %d is %v (%s), want %v", tc.arg, i, x, a.Texts[i], want)
			}
			drifted = drifted || sum != want
			sum += step
		}
		if !drifted {
			t.Logf("%s: a running sum would not have drifted either", tc.arg)
		}
	}
}

// TestParseVaryErrors: every refusal is one plain line naming the argument
// and saying what is allowed.
func TestParseVaryErrors(t *testing.T) {
	for _, tc := range []struct {
		arg, want string
	}{
		{"", "has no ="},
		{"risk_ratio", "has no ="},
		{"=0.5", "names no key"},
		{"risk ratio=0.5", `"risk ratio" is not a key`},
		{"risk_ratio=", "gives no value"},
		{"risk_ratio=  ", "gives no value"},
		{"risk_ratio=0.5,,0.7", "value 2 is empty"},
		{"risk_ratio=0.5,", "value 2 is empty"},
		{"risk_ratio=abc", `value 1 "abc" is not a number`},
		{"risk_ratio=0.5,NaN", `value 2 "NaN" is not a finite number`},
		{"risk_ratio=Inf", `"Inf" is not a finite number`},
		{"risk_ratio=1e400", `is not a number`},
		{"control_risk=20%", "is a percentage"},
		{"n=0x10", "is not a decimal number"},
		{"n=1_000", "is not a decimal number"},
		{"x=1:2", "a range has three parts"},
		{"x=1:2:3:4", "a range has three parts"},
		{"x=1:2:0", "STEP is 0"},
		{"x=1:2:-0.1", "never reaches TO"},
		{"x=2:1:0.1", "never reaches TO"},
		{"x=:1:0.1", "FROM is empty"},
		{"x=0:b:0.1", `TO "b" is not a number`},
		{"x=0:1:nan", `STEP "nan" is not a finite number`},
		{"x=0:1:1e-12", "more than 10,000,000"},
		{"x=0:1e300:1", "more than 10,000,000"},
	} {
		_, err := ParseVary(tc.arg)
		var ge *GridError
		switch {
		case err == nil:
			t.Errorf("%q: no error, want %q", tc.arg, tc.want)
		case !errors.As(err, &ge):
			t.Errorf("%q: %T is not a *GridError", tc.arg, err)
		case !strings.Contains(err.Error(), tc.want) || !strings.Contains(err.Error(), strconv.Quote(tc.arg)):
			t.Errorf("%q: error %q, want one naming the argument and containing %q", tc.arg, err, tc.want)
		case strings.Contains(err.Error(), "\n") || !strings.Contains(err.Error(), "allowed"):
			t.Errorf("%q: error %q is not one line saying what is allowed", tc.arg, err)
		}
	}
}

// TestGridOrder: the last axis varies fastest, and Values and Texts give
// each point's values in axis order.
func TestGridOrder(t *testing.T) {
	var axes []Axis
	for _, arg := range []string{"a=1,2", "b.c=10,20,30", "d=0.5:0.7:0.1"} {
		a, err := ParseVary(arg)
		if err != nil {
			t.Fatal(err)
		}
		axes = append(axes, a)
	}
	g := Grid{Axes: axes}
	if g.Size() != 18 {
		t.Fatalf("size %d, want 18", g.Size())
	}
	var got []string
	for i := range g.Size() {
		v, tx := g.Values(i), g.Texts(i)
		if s := fmt.Sprint(v); s != "["+strings.Join(tx, " ")+"]" {
			t.Fatalf("point %d: values %v, texts %v", i, v, tx)
		}
		got = append(got, strings.Join(tx, ","))
	}
	want := []string{
		"1,10,0.5", "1,10,0.6", "1,10,0.7", "1,20,0.5", "1,20,0.6", "1,20,0.7", "1,30,0.5", "1,30,0.6", "1,30,0.7",
		"2,10,0.5", "2,10,0.6", "2,10,0.7", "2,20,0.5", "2,20,0.6", "2,20,0.7", "2,30,0.5", "2,30,0.6", "2,30,0.7",
	}
	if !slices.Equal(got, want) {
		t.Fatalf("order %v, want %v", got, want)
	}
	if (Grid{}).Size() != 1 || len((Grid{}).Values(0)) != 0 {
		t.Fatal("a grid without axes is not one point")
	}
}

// TestGridSizeOverflow: a product that does not fit in an int saturates,
// so that every limit refuses it.
func TestGridSizeOverflow(t *testing.T) {
	big := Axis{Key: "x", Values: make([]float64, 1<<16), Texts: make([]string, 1<<16)}
	for _, tc := range []struct {
		axes int
		want int
	}{
		{1, 1 << 16}, {2, 1 << 32}, {3, 1 << 48}, {4, math.MaxInt}, {5, math.MaxInt},
	} {
		g := Grid{Axes: slices.Repeat([]Axis{big}, tc.axes)}
		if got := g.Size(); got != tc.want {
			t.Errorf("%d axes of 65,536 values: size %d, want %d", tc.axes, got, tc.want)
		}
	}
	if got := (Grid{Axes: []Axis{big, {Key: "y"}}}).Size(); got != 0 {
		t.Errorf("an empty axis: size %d, want 0", got)
	}
}
