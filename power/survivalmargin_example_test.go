package power_test

import (
	"fmt"
	"math"

	"enough/power"
)

// Planning a non-inferiority trial of a gentler regimen: its hazard of
// relapse may be at most 1.3 times that of the standard one (margin 1.3:
// a lower hazard is better), the two are assumed equally good (hazard
// ratio 1), one-sided alpha 0.025, 80% power, equal arms. The same numbers
// are rows ni_01 (456.098142249729 events) and nip_01 (power 0.746551999820
// at 400 events) of testdata/reference/survmargin_events.tsv and
// survmargin_power.tsv, computed in R from Schoenfeld's formula.
func ExampleEventsMethod_NonInferiorityEvents() {
	d, err := power.Schoenfeld.NonInferiorityEvents(1, 1.3, 1, 0.025, 0.8)
	if err != nil {
		fmt.Println(err)
		return
	}
	fmt.Printf("events %.2f, rounded up %v\n", d, math.Ceil(d))
	fmt.Printf("power with 400 events %.4f\n", power.Schoenfeld.NonInferiorityEventsPower(1, 1.3, 1, 0.025, 400))
	// A true hazard ratio at the margin cannot be shown non-inferior.
	_, err = power.Schoenfeld.NonInferiorityEvents(1.3, 1.3, 1, 0.025, 0.8)
	fmt.Println(err)
	// Output:
	// events 456.10, rounded up 457
	// power with 400 events 0.7466
	// power: target cannot be reached
}
