package power_test

import (
	"fmt"

	"enough/power"
)

// Five equally spaced looks with O'Brien-Fleming boundaries at two-sided
// alpha 0.05: the critical values fall from 4.56 to 2.04, and the maximum
// size is about 2.6% above the fixed-sample size for 90% power.
func ExampleGroupSequential_Boundaries() {
	seq, err := power.GroupSequential{Timing: power.EqualTiming(5), Alpha: 0.05, Sides: 2, Family: power.OBrienFleming}.Boundaries()
	if err != nil {
		panic(err)
	}
	for k, z := range seq.Z {
		fmt.Printf("look %d: |Z| ≥ %.3f (nominal p %.4f)\n", k+1, z, seq.PNominal[k])
	}
	r, _ := seq.Inflation(0.9)
	fmt.Printf("inflation for 90%% power: %.3f\n", r)
	// Output:
	// look 1: |Z| ≥ 4.562 (nominal p 0.0000)
	// look 2: |Z| ≥ 3.226 (nominal p 0.0013)
	// look 3: |Z| ≥ 2.634 (nominal p 0.0084)
	// look 4: |Z| ≥ 2.281 (nominal p 0.0226)
	// look 5: |Z| ≥ 2.040 (nominal p 0.0413)
	// inflation for 90% power: 1.026
}
