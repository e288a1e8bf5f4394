package cli

import (
	"context"
	"errors"

	"corvane/internal/fabric"
	"corvane/internal/geotech"
	"corvane/internal/structdomain"
)

func init() {
	register(command{
		name:    "domains",
		summary: "set statistics per structural domain and a test of a common mean direction between domains",
		run:     runDomains,
	})
}

const domainsUsage = `Usage:
  corvane domains --in FILE --domain ` + structdomain.Syntax + ` --domain ...
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

func runDomains(_ context.Context, env *Env, args []string) int {
	fs := newFlagSet(env, "domains", domainsUsage)
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
	gi, so, err := loadGeo(env, &c)
	if err != nil {
		return fail(err)
	}
	rep, err := geotech.Domains(gi.in, so, doms)
	if err != nil {
		return fail(err)
	}
	rep.Input, rep.TypeFilter, rep.Problems = gi.file, c.typ, gi.problems
	if code := writeJSON(env, fail, c.out, rep); code != ExitOK {
		return code
	}
	return gi.exit()
}
