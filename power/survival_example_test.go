package power_test

import (
	"fmt"
	"math"

	"enough/power"
)

// Sizing a trial to detect a hazard ratio of 0.75 (intervention over
// control), two-sided alpha 0.05, 80% power, equal arms, with a control
// median survival of 3 years, recruitment spread evenly over 2 years and 3
// more years of follow-up, no loss to follow-up. The same numbers are row
// surv_13 of testdata/reference/trials_survival.tsv: events 379.351729597381,
// P(event) 0.599609413306384 (control) and 0.497493880783544
// (intervention), n_total_star 691.551527811357, n1_star 345.775763905679.
func ExampleEventsMethod_Events() {
	const hr, r = 0.75, 1.0
	d, err := power.Schoenfeld.Events(hr, r, 0.05, 2, 0.8)
	if err != nil {
		fmt.Println(err)
		return
	}
	h2 := power.HazardFromMedian(3)
	e := power.Entry{Accrual: 2, FollowUp: 3}
	pc := power.EventProbability(h2, e)
	pi := power.EventProbability(hr*h2, e)
	n := d / (pi/(1+r) + pc*r/(1+r))
	fmt.Printf("events %.2f, rounded up %v\n", d, math.Ceil(d))
	fmt.Printf("P(event) control %.4f, intervention %.4f\n", pc, pi)
	fmt.Printf("participants %.2f, per arm %v\n", n, math.Ceil(n/(1+r)))
	// Output:
	// events 379.35, rounded up 380
	// P(event) control 0.5996, intervention 0.4975
	// participants 691.55, per arm 346
}
