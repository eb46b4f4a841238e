package report

import (
	"context"
	"errors"
	"strings"
	"testing"

	"enough/designs"
)

// TestPartialSimulation: a simulation stopped before its first replicate
// says so in words ("no replicate finished") and gives no simulated
// power, and its JSON has power, agreement and the rest null, not 0 and
// false; one stopped after some replicates says how many.
func TestPartialSimulation(t *testing.T) {
	const spec = "version: 1\ndesign: trial\ncontrol_risk: 0.3\nrisk_ratio: 0.7\npower: 0.8\n"
	r := planSpec(t, spec)
	ctx, cancel := context.WithCancel(context.Background())
	cancel()
	if err := designs.Verify(ctx, r.Spec, r, designs.SimOptions{Replicates: 10000}); !errors.Is(err, designs.ErrStopped) {
		t.Fatalf("err = %v", err)
	}
	for _, format := range []string{"markdown", "text"} {
		out := strings.Join(strings.Fields(render(t, r, format)), " ") // lines rewrapped
		if !strings.Contains(out, "no replicate finished, so there is no simulated power") || strings.Contains(out, "Simulated power of") {
			t.Errorf("%s:\n%s", format, out)
		}
	}
	js := render(t, r, "json")
	for _, want := range []string{`"power": null`, `"se": null`, `"ci": null`, `"difference": null`, `"agrees": null`, `"partial": true`} {
		if !strings.Contains(js, want) {
			t.Errorf("json: no %s", want)
		}
	}

	r = planSpec(t, spec)
	ctx, cancel = context.WithCancel(context.Background())
	defer cancel()
	err := designs.Verify(ctx, r.Spec, r, designs.SimOptions{Replicates: 100000, Workers: 1,
		Progress: func(_ string, done, _ int64) { cancel() }})
	if !errors.Is(err, designs.ErrStopped) {
		t.Fatalf("err = %v", err)
	}
	out := strings.Join(strings.Fields(render(t, r, "text")), " ")
	if !strings.Contains(out, "the simulation was stopped after 8,192 replicates") || !strings.Contains(out, "Simulated power of") {
		t.Errorf("stopped after one block:\n%s", out)
	}
}
