package fabric

import "corvane/internal/dirstat"

// PlaneSets forms the sets s on the poles of the rows' planes, unweighted,
// by the same methods as [Stats] (k-means on axes, type codes or windows):
// it returns each row's set index (dirstat.Unassigned for a row without a
// plane or in no set), the set names and the method's description. The
// geotechnical reports (spacing, domains, slope checks) group planes with
// it, so their sets are the statistics' sets.
func PlaneSets(rows []Row, s Sets) (assign []int, names []string, method string, err error) {
	g := buildGroup(rows, kindPlanes, Weighting{})
	assign = make([]int, len(rows))
	for i := range assign {
		assign[i] = dirstat.Unassigned
	}
	if len(g.axes) == 0 || !s.any() {
		return assign, nil, "", nil
	}
	if err := g.assignSets(rows, s); err != nil {
		return nil, nil, "", err
	}
	for k, ri := range g.rows {
		assign[ri] = g.assign[k]
	}
	return assign, g.setNames, g.method, nil
}
