package power_test

import (
	"fmt"

	"enough/power"
)

// Comparing two groups of six participants with the log-rank test. Times
// are in months; false marks a participant censored (still event-free when
// last seen). The data are the "tiny" dataset of
// testdata/reference/logrank_data.tsv, for which R's
// survdiff(Surv(time, status) ~ group) gives chi-square 1.94182983304752,
// 3 observed against 4.86767676767677 expected events in group 1 and
// variance 1.79635540105237 (testdata/reference/logrank_chisq.tsv).
func ExampleLogRank() {
	time := []float64{3, 5, 5, 8, 10, 12, 1, 2, 4, 5, 6, 9}
	event := []bool{true, true, false, true, false, false, true, true, true, true, false, true}
	group := []int{1, 1, 1, 1, 1, 1, 2, 2, 2, 2, 2, 2}
	fmt.Printf("chi-square %.4f\n", power.LogRank(time, event, group))
	r := power.LogRankTest(time, event, group)
	fmt.Printf("group 1: observed %v, expected %.4f, variance %.4f, Z %.4f\n",
		r.Observed, r.Expected, r.Variance, r.Z())
	// Output:
	// chi-square 1.9418
	// group 1: observed 3, expected 4.8677, variance 1.7964, Z -1.3935
}
