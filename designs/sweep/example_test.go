package sweep_test

import (
	"context"
	"fmt"

	"enough/designs"
	"enough/designs/sweep"
)

// An invented trial of reminder letters: how n per group moves with the
// assumed risk ratio, and a ratio that pushes the intervention arm's risk
// past 1, which is a row with its error rather than an abort.
//
// The sizes are ceil of R's power.prop.test(p1=0.5*0.1, p2=0.1,
// power=0.8, sig.level=0.05)$n = 434.43, and 720.92 and 1355.37 for
// p1=0.6*0.1 and p1=0.7*0.1 (testdata/reference/sweep_make.out, grid
// prop_n): Fleiss' formula without continuity correction is the formula
// of power.prop.test. The powers are power.prop.test(n=435, p1=0.5*0.1,
// p2=0.1, sig.level=0.05)$power = 0.8005, and 0.8000 and 0.8002 at
// n=721 and n=1356.
func ExampleRun() {
	spec := `version: 1
title: Reminder letters (invented)
design: trial
control_risk: 0.1
risk_ratio: 0.5
power: 0.8
method: fleiss
`
	base, err := designs.NewBase("reminders.yaml", []byte(spec), nil)
	if err != nil {
		fmt.Println(err)
		return
	}
	ratios, err := sweep.ParseVary("risk_ratio=0.5,0.6,0.7,12")
	if err != nil {
		fmt.Println(err)
		return
	}
	rows, err := sweep.Run(context.Background(), base, sweep.Grid{Axes: []sweep.Axis{ratios}}, sweep.Options{})
	if err != nil {
		fmt.Println(err)
		return
	}
	for _, r := range rows {
		if r.Err != nil {
			fmt.Printf("risk_ratio %s: %v\n", ratios.Texts[r.Index], r.Err)
			continue
		}
		fmt.Printf("risk_ratio %s: n per group %v, power %.3f\n", ratios.Texts[r.Index], r.Result.N, *r.Result.AchievedPower)
	}
	// Output:
	// risk_ratio 0.5: n per group [435 435], power 0.801
	// risk_ratio 0.6: n per group [721 721], power 0.800
	// risk_ratio 0.7: n per group [1356 1356], power 0.800
	// risk_ratio 12: --vary risk_ratio=12: risk_ratio: 12 with control_risk 0.1 gives a risk of 1.2 in the intervention arm; allowed: an effect that keeps the risk from 1e-9 to 1 − 1e-9
}
