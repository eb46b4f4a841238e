package power_test

import (
	"fmt"

	"enough/power"
)

// The exact power of Fisher's exact test, two-sided at 5%, with 60 per
// group and risks of 15% and 40%. R 4.2.2 enumeration with fisher.test's
// decisions, row pow_big_5 of testdata/reference/exact_power.tsv:
// 0.834412423372261.
func ExampleExactPower() {
	p := power.ExactPower(power.Fisher, 60, 60, 0.15, 0.40, 0.05, 2, 0)
	fmt.Printf("%.4f\n", p)
	// Output: 0.8344
}

// Exact power rises in a saw-tooth: with risks of 5% and 40% and Fisher's
// test, 26 per group reach 84.1% power but 27 fall back below it. R 4.2.2
// enumeration, rows saw_1_n024 to saw_1_n028 of
// testdata/reference/exact_sawtooth.tsv: 0.821244, 0.821584, 0.841294,
// 0.840102, 0.860115; first 26, stable 28.
func ExampleExactSolveN() {
	st, err := power.ExactSolveN(power.Fisher, 1, 0.05, 0.40, 0.05, 2, 0, 0.841, 24, 28)
	if err != nil {
		fmt.Println(err)
		return
	}
	for i, p := range st.Powers {
		fmt.Printf("n = %d: %.6f\n", st.Low+i, p)
	}
	fmt.Println("first", st.First, "stable", st.Stable)
	// Output:
	// n = 24: 0.821244
	// n = 25: 0.821584
	// n = 26: 0.841294
	// n = 27: 0.840102
	// n = 28: 0.860115
	// first 26 stable 28
}
