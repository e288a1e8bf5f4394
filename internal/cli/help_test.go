package cli

import (
	"bytes"
	"context"
	"flag"
	"sort"
	"strings"
	"testing"
)

// TestEveryCommandHelp runs --help on every registered subcommand (so a new
// one is covered as soon as it registers): the exit status is 0, there is a
// usage line and a description, every flag the command defines is named in
// the help, and no default reads NaN.
func TestEveryCommandHelp(t *testing.T) {
	names := make([]string, 0, len(commands))
	for n := range commands {
		names = append(names, n)
	}
	sort.Strings(names)
	if len(names) < 9 {
		t.Fatalf("only %d commands registered: %v", len(names), names)
	}
	t.Cleanup(func() { flagSetMade = nil })
	for _, name := range names {
		for _, h := range []string{"--help", "-h"} {
			var sets []*flag.FlagSet
			flagSetMade = func(fs *flag.FlagSet) { sets = append(sets, fs) }
			var out, errb bytes.Buffer
			code := Main(context.Background(), []string{name, h}, strings.NewReader(""), &out, &errb, func(string) string { return "" })
			help := out.String() + errb.String()
			if code != ExitOK {
				t.Errorf("corvane %s %s: exit %d, want 0\n%s", name, h, code, help)
				continue
			}
			if !strings.Contains(help, "Usage") {
				t.Errorf("corvane %s %s: no usage line:\n%s", name, h, help)
			}
			if len(sets) == 0 {
				t.Errorf("corvane %s: made no flag set with newFlagSet", name)
			}
			for _, fs := range sets {
				fs.VisitAll(func(f *flag.Flag) {
					if !strings.Contains(help, "-"+f.Name+" ") && !strings.Contains(help, "-"+f.Name+"\n") {
						t.Errorf("corvane %s %s does not document -%s", name, h, f.Name)
					}
					if f.Usage == "" {
						t.Errorf("corvane %s: -%s has no description", name, f.Name)
					}
				})
			}
			if strings.Contains(help, "NaN") {
				t.Errorf("corvane %s %s shows NaN:\n%s", name, h, help)
			}
			// A description: at least one line of prose besides the usage
			// lines and the flag list.
			prose := 0
			for _, l := range strings.Split(help, "\n") {
				l = strings.TrimSpace(l)
				if len(l) > 40 && !strings.HasPrefix(l, "-") && !strings.HasPrefix(l, "Usage") && !strings.HasPrefix(l, "corvane ") {
					prose++
				}
			}
			if prose < 2 {
				t.Errorf("corvane %s %s has no description:\n%s", name, h, help)
			}
		}
	}
}

func TestHelpSubcommandAndVersion(t *testing.T) {
	run := func(args ...string) (int, string) {
		var out, errb bytes.Buffer
		code := Main(context.Background(), args, strings.NewReader(""), &out, &errb, func(string) string { return "" })
		return code, out.String() + errb.String()
	}
	if code, out := run("help", "token"); code != ExitOK || !strings.Contains(out, "token create") {
		t.Errorf("corvane help token: exit %d\n%s", code, out)
	}
	for _, a := range []string{"--version", "version"} {
		code, out := run(a)
		if code != ExitOK || !strings.HasPrefix(out, "corvane ") || strings.TrimSpace(out) == "corvane" {
			t.Errorf("corvane %s: exit %d, %q", a, code, out)
		}
	}
	old := version
	version = "v9.8.7"
	defer func() { version = old }()
	if _, out := run("--version"); out != "corvane v9.8.7\n" {
		t.Errorf("corvane --version with a link-time version: %q", out)
	}
	// Without an action token and migrate still say how to use them (exit 2).
	for _, c := range []string{"token", "migrate"} {
		if code, out := run(c); code != ExitUsage || !strings.Contains(out, "Usage") {
			t.Errorf("corvane %s: exit %d\n%s", c, code, out)
		}
	}
	if code, out := run("token", "frobnicate"); code != ExitUsage || !strings.Contains(out, "unknown action") {
		t.Errorf("corvane token frobnicate: exit %d\n%s", code, out)
	}
}
