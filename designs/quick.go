package designs

// Quick computes only the figures of a plan that a sweep's table shows: the
// analysable sizes N and their Total, the enrolment Enrol and EnrolTotal,
// the unrounded NStar, the achieved power (solving n or power) or the
// detectable effect (solving effect), the events (time-to-event, solving
// n), the clusters per arm (cluster designs) and the pairs (paired
// designs); for a precision survey N0 and the Margin as well; for a
// group-sequential trial its Interim figures (the looks and the expected
// sizes). Every other
// field of the Answer is left empty, and no step, alternative, note or
// warning is computed.
//
// Quick and [Plan] share one core (solveCore, precisionCore): the figures
// Quick gives are exactly those of Plan's Result.Result, and a
// specification Plan cannot plan fails in Quick with the same error. With
// method exact, whose answer is a search by enumeration, Quick is Plan.
func Quick(s *Spec) (*Answer, error) {
	a := &Answer{}
	if err := QuickInto(s, a); err != nil {
		return nil, err
	}
	return a, nil
}

// QuickInto is [Quick] writing into a, which must be a new (zero)
// Answer, save that it may hold room for the figures: N and Enrol empty
// with the capacity for two sizes each, and AchievedPower pointing to a
// float64. QuickInto then puts the sizes and the power there rather than
// allocating them: a sweep gives each point its room in blocks it
// allocates at once. On an error, a holds what was computed before it.
func QuickInto(s *Spec, a *Answer) error {
	if s.Solve == "effect" || s.Goal == "precision" || s.Goal == "accuracy" {
		a.AchievedPower = nil // no power to put in the room
	}
	switch {
	case s.Method == "exact":
		res, err := Plan(s)
		if err != nil {
			return err
		}
		r := &res.Result
		a.NStar, a.N, a.Total, a.Enrol, a.EnrolTotal = r.NStar, r.N, r.Total, r.Enrol, r.EnrolTotal
		a.AchievedPower, a.Detectable, a.Events, a.Clusters, a.Pairs = r.AchievedPower, r.Detectable, r.Events, r.Clusters, r.Pairs
		a.N0, a.Margin = r.N0, r.Margin
		return nil
	case s.Goal == "precision" && s.Design != "cross-sectional":
		return ratioPrecisionCore(s, a, nil)
	case s.Goal == "precision":
		return precisionCore(s, a, nil)
	case s.Goal == "accuracy":
		return accuracyCore(s, a, nil)
	}
	var main solved
	if _, err := solveCore(s, MethodByID(s.Method), a, nil, &main); err != nil {
		return err
	}
	if s.Interim != nil && s.Solve != "effect" {
		// The looks and expected sizes of a group-sequential plan.
		return interimFigures(s, a, &main, nil)
	}
	return nil
}
