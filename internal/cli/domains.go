package cli

import (
	"context"
	"corvane/internal/fabric"
	"errors"
	"flag"
	"fmt"
	"math"

	"corvane/internal/dirstat"
	"corvane/internal/geom"
)

func init() {
	register(command{
		name:    "domains",
		summary: "set statistics per structural domain and a test of a common mean direction between domains",
		run:     runDomains,
	})
}

const domainsUsage = `Usage:
  corvane domains --in FILE --domain ` + domainSyntax + ` --domain ...
                  (--sets auto:N | --set NAME:TREND/PLUNGE:CONE ...) [--type TYPE] [-o OUT.json]

Structural domains are named parts of the rock mass: hole intervals (a hole without a
range is the whole hole) and, optionally, rock types (the rock_type column). For each
domain and each set the JSON gives the count, the mean plane and the Fisher statistics
of the oriented poles in the domain; for each set found in at least two domains it gives
the test for a common mean direction of Watson (1956) as set out by Fisher, Lewis &
Embleton (1987, Statistical Analysis of Spherical Data, section 7.2), with its F
statistic, degrees of freedom and p-value: a small p-value (e.g. below 0.05) says the
set's mean direction differs between the domains. The test assumes Fisher-distributed
samples with a common concentration; a measurement in two domains is used in both, which
breaks the test's independence (the output says when).

Sets are formed on all rows as in corvane stats; unoriented measurements (no dip) never
enter set means and are counted per domain.

` + fabric.Caution + `

Options:
`

type jDomSet struct {
	Name   string       `json:"name"`
	Count  int          `json:"count"`
	Mean   *fabric.Mean `json:"mean,omitempty"`
	K      fabric.Num   `json:"k"`
	Cone95 fabric.Num   `json:"cone95"`
	Spread fabric.Num   `json:"spread"`
}

type jDomain struct {
	Name       string    `json:"name"`
	Rows       int       `json:"rows"`
	Planes     int       `json:"oriented_planes"`
	Unoriented int       `json:"unoriented_excluded_from_means"`
	Sets       []jDomSet `json:"sets"`
}

type jCommonMean struct {
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

type jDomainsReport struct {
	Input       string             `json:"input"`
	RowsSkipped []fabric.SkipCount `json:"rows_skipped"`
	SetMethod   string             `json:"set_method"`
	Domains     []jDomain          `json:"domains"`
	Method      string             `json:"common_mean_method"`
	Tests       []jCommonMean      `json:"common_mean_tests"`
	Problems    []string           `json:"problems,omitempty"`
	Caution     string             `json:"caution"`
}

func runDomains(_ context.Context, env *Env, args []string) int {
	fs := flag.NewFlagSet("domains", flag.ContinueOnError)
	fs.SetOutput(env.Stderr)
	fs.Usage = func() {
		fmt.Fprint(env.Stderr, domainsUsage)
		fs.PrintDefaults()
	}
	var c orientFlags
	registerGeoFlags(fs, &c)
	var doms domainFlags
	registerDomainFlags(fs, &doms)
	fail, code, done := parseOrientArgs(env, fs, "domains", args)
	if done {
		return code
	}
	if len(doms) < 1 {
		return fail(errors.New("give at least one --domain (two or more for the common-mean test)"))
	}
	gs, err := loadGeoSets(env, &c, true)
	if err != nil {
		return fail(err)
	}
	g := gs.group
	rep := jDomainsReport{Input: gs.in.file, RowsSkipped: gs.in.skipped(), SetMethod: g.method, Method: dirstat.CommonMeanMethod, Caution: fabric.Caution}
	for _, p := range gs.in.problems {
		rep.Problems = append(rep.Problems, p.Error())
	}
	// members[set][domain] = poles
	members := make([][][]geom.Vec3, len(g.setNames))
	rowsOf := make([][][]int, len(g.setNames))
	for j := range members {
		members[j] = make([][]geom.Vec3, len(doms))
		rowsOf[j] = make([][]int, len(doms))
	}
	for d := range doms {
		dom := &doms[d]
		jd := jDomain{Name: dom.Name}
		for i, r := range gs.in.rows {
			if !gs.inDomain(i, dom) {
				continue
			}
			jd.Rows++
			if r.Unoriented {
				jd.Unoriented++
			}
		}
		for k, ri := range g.rows {
			if gs.inDomain(ri, dom) {
				jd.Planes++
				if s := g.assign[k]; s >= 0 {
					members[s][d] = append(members[s][d], g.axes[k])
					rowsOf[s][d] = append(rowsOf[s][d], ri)
				}
			}
		}
		for j, name := range g.setNames {
			js := jDomSet{Name: name, Count: len(members[j][d])}
			if f, err := dirstat.FisherMean(members[j][d], nil, true); err == nil {
				pl, ml := geom.PlaneOf(f.Mean), geom.LineOf(f.Mean)
				js.Mean = &fabric.Mean{Dip: numPtr(pl.Dip), DipDirection: numPtr(pl.DipDirection), PoleTrend: numPtr(ml.Trend), PolePlunge: numPtr(ml.Plunge)}
				js.K, js.Cone95, js.Spread = fabric.Num(f.K), fabric.Num(f.Cone95), fabric.Num(f.Spread)
			} else {
				js.K, js.Cone95, js.Spread = fabric.Num(math.NaN()), fabric.Num(math.NaN()), fabric.Num(math.NaN())
			}
			jd.Sets = append(jd.Sets, js)
		}
		rep.Domains = append(rep.Domains, jd)
	}
	for j, name := range g.setNames {
		t := jCommonMean{Set: name}
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
	if code := writeJSON(env, fail, c.out, rep); code != ExitOK {
		return code
	}
	if len(gs.in.problems) > 0 {
		return ExitRows
	}
	return ExitOK
}
