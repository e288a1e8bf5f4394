package geotech

import (
	"errors"
	"math"

	"corvane/internal/dirstat"
	"corvane/internal/fabric"
	"corvane/internal/geom"
	"corvane/internal/structdomain"
)

// DomainSet is one set in one domain.
type DomainSet struct {
	Name   string       `json:"name"`
	Count  int          `json:"count"`
	Mean   *fabric.Mean `json:"mean,omitempty"`
	K      fabric.Num   `json:"k"`
	Cone95 fabric.Num   `json:"cone95"`
	Spread fabric.Num   `json:"spread"`
}

// DomainSummary is one domain's rows and sets.
type DomainSummary struct {
	Name       string      `json:"name"`
	Rows       int         `json:"rows"`
	Planes     int         `json:"oriented_planes"`
	Unoriented int         `json:"unoriented_excluded_from_means"`
	Sets       []DomainSet `json:"sets"`
}

// CommonMean is the common-mean test of one set between the domains in which
// it has at least two poles.
type CommonMean struct {
	Set     string     `json:"set"`
	Domains []string   `json:"domains"`
	N       int        `json:"n"`
	F       fabric.Num `json:"F"`
	DF1     int        `json:"df1"`
	DF2     int        `json:"df2"`
	P       fabric.Num `json:"p_value"`
	Shared  int        `json:"measurements_in_several_domains,omitempty"`
	Note    string     `json:"note,omitempty"`
}

// DomainsReport is the report of [Domains]; Input, TypeFilter and Problems
// are filled in by the door.
type DomainsReport struct {
	Source
	SetMethod string          `json:"set_method"`
	Domains   []DomainSummary `json:"domains"`
	Method    string          `json:"common_mean_method"`
	Tests     []CommonMean    `json:"common_mean_tests"`
	Caution   string          `json:"caution"`
}

// Domains reports each set in each domain and tests, per set, whether the
// domains share its mean direction ([dirstat.CommonMeanTest]).
func Domains(in Input, s fabric.Sets, doms []structdomain.Domain) (DomainsReport, error) {
	if len(doms) == 0 {
		return DomainsReport{}, errors.New("no domains")
	}
	if err := structdomain.Validate(doms); err != nil {
		return DomainsReport{}, err
	}
	g, err := formSets(in, s, true)
	if err != nil {
		return DomainsReport{}, err
	}
	rep := DomainsReport{Source: in.source(), SetMethod: g.method,
		Method: dirstat.CommonMeanMethod, Caution: fabric.Caution}
	members := make([][][]geom.Vec3, len(g.names)) // [set][domain]
	rowsOf := make([][][]int, len(g.names))
	for j := range members {
		members[j] = make([][]geom.Vec3, len(doms))
		rowsOf[j] = make([][]int, len(doms))
	}
	for d := range doms {
		dom := &doms[d]
		jd := DomainSummary{Name: dom.Name}
		for _, r := range in.Rows {
			if inDomain(r, dom) {
				jd.Rows++
				if r.Unoriented {
					jd.Unoriented++
				}
			}
		}
		for k, ri := range g.rows {
			if inDomain(in.Rows[ri], dom) {
				jd.Planes++
				if j := g.assign[k]; j >= 0 {
					members[j][d] = append(members[j][d], g.axes[k])
					rowsOf[j][d] = append(rowsOf[j][d], ri)
				}
			}
		}
		for j, name := range g.names {
			js := DomainSet{Name: name, Count: len(members[j][d])}
			if f, err := dirstat.FisherMean(members[j][d], nil, true); err == nil {
				js.Mean = planeMean(f.Mean)
				js.K, js.Cone95, js.Spread = fabric.Num(f.K), fabric.Num(f.Cone95), fabric.Num(f.Spread)
			} else {
				nan := fabric.Num(math.NaN())
				js.K, js.Cone95, js.Spread = nan, nan, nan
			}
			jd.Sets = append(jd.Sets, js)
		}
		rep.Domains = append(rep.Domains, jd)
	}
	for j, name := range g.names {
		t := CommonMean{Set: name}
		var samples [][]geom.Vec3
		seen := map[int]int{}
		for d := range doms {
			if len(members[j][d]) >= 2 {
				samples = append(samples, members[j][d])
				t.Domains = append(t.Domains, doms[d].Name)
				for _, ri := range rowsOf[j][d] {
					seen[ri]++
				}
			}
		}
		for _, n := range seen {
			if n > 1 {
				t.Shared++
			}
		}
		res, err := dirstat.CommonMeanTest(samples, true)
		if err != nil {
			t.Note = "needs the set in at least two domains with at least 2 poles each: " + err.Error()
			t.F, t.P = fabric.Num(math.NaN()), fabric.Num(math.NaN())
		} else {
			t.N, t.F, t.DF1, t.DF2, t.P = res.N, fabric.Num(res.F), res.DF1, res.DF2, fabric.Num(res.P)
		}
		if t.Shared > 0 {
			t.Note = "some measurements lie in several domains: the samples are not independent and the p-value is not valid"
		}
		rep.Tests = append(rep.Tests, t)
	}
	return rep, nil
}
