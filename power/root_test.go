package power

import (
	"errors"
	"math"
	"testing"
)

func TestFindRoot(t *testing.T) {
	for _, c := range []struct {
		name string
		f    func(float64) float64
		a, b float64
		want float64
	}{
		// √2 and the Dottie number cos x = x (0.7390851332151607, from
		// memory; cross-checked below by evaluating cos at the root).
		{"sqrt2", func(x float64) float64 { return x*x - 2 }, 0, 2, math.Sqrt2},
		{"dottie", func(x float64) float64 { return math.Cos(x) - x }, 0, 1, 0.7390851332151607},
		{"cubic", func(x float64) float64 { return (x - 1) * (x - 1) * (x - 1) }, -2, 3, 1},
		{"endpoint", func(x float64) float64 { return x - 3 }, 3, 5, 3},
	} {
		got, err := FindRoot(c.f, c.a, c.b, 1e-14)
		if err != nil || math.Abs(got-c.want) > 1e-9 {
			t.Errorf("%s: got %v, %v; want %v", c.name, got, err, c.want)
		}
	}
	if x, _ := FindRoot(func(x float64) float64 { return math.Cos(x) - x }, 0, 1, 1e-15); math.Abs(math.Cos(x)-x) > 1e-15 {
		t.Errorf("dottie: cos(x) - x = %v at %v", math.Cos(x)-x, x)
	}
	if _, err := FindRoot(func(x float64) float64 { return x*x + 1 }, -1, 1, 1e-12); !errors.Is(err, ErrNoBracket) {
		t.Errorf("no bracket: err = %v", err)
	}
}
