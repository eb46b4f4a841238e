package designs

import (
	"slices"
	"sort"
)

// BoundaryKey is a numeric key of the specification, dotted when nested
// (cluster.icc), with what it allows as the messages say it: the
// extreme-value test of the external test package takes its limits from
// there, so that a key added to specKeys is tested at its limits too.
type BoundaryKey struct {
	Name    string
	Whole   bool
	Allowed string
}

// BoundaryKeys returns every numeric key, sorted.
func BoundaryKeys() []BoundaryKey {
	var out []BoundaryKey
	for k, info := range specKeys {
		if info.kind == kindNumber || info.kind == kindWhole {
			out = append(out, BoundaryKey{k, info.kind == kindWhole, info.allowed})
		}
	}
	for k, allowed := range clusterKeys {
		out = append(out, BoundaryKey{"cluster." + k, false, allowed})
	}
	for k, allowed := range simulateKeys {
		out = append(out, BoundaryKey{"simulate." + k, true, allowed})
	}
	for k, allowed := range claimedKeys {
		if k != "method" {
			whole := !slices.Contains([]string{"power", "alpha", "tolerance_n", "tolerance_power"}, k)
			out = append(out, BoundaryKey{"claimed." + k, whole, allowed})
		}
	}
	sort.Slice(out, func(i, j int) bool { return out[i].Name < out[j].Name })
	return out
}

// HiddenLimits are limits the code enforces that the allowed texts do not
// state, by key ("" for every whole-number key).
var HiddenLimits = map[string][]float64{
	"":      {MaxSize},
	"power": {MaxPower},
}

func init() {
	// "1 − 1e-9" in an allowed text reads as the limits 1 and 1e-9.
	for k, info := range specKeys {
		if info.allowed == allowedRisk {
			HiddenLimits[k] = append(HiddenLimits[k], 1-MinRisk)
		}
	}
}
