package importrules

import (
	"bufio"
	"bytes"
	"os/exec"
	"strings"
	"testing"
)

const module = "corvane/"

// pure lists the computation packages: they may import the standard library,
// gonum and each other, nothing else of the service.
var pure = map[string]bool{
	"corvane/internal/geom":         true,
	"corvane/internal/desurvey":     true,
	"corvane/internal/coreangle":    true,
	"corvane/internal/dirstat":      true,
	"corvane/internal/fabric":       true,
	"corvane/internal/density":      true,
	"corvane/internal/projection":   true,
	"corvane/internal/netsvg":       true,
	"corvane/internal/visual":       true,
	"corvane/internal/wmm":          true,
	"corvane/internal/igrf":         true,
	"corvane/internal/localgrid":    true,
	"corvane/internal/utm":          true,
	"corvane/internal/northref":     true,
	"corvane/internal/holemodel":    true,
	"corvane/internal/qa":           true,
	"corvane/internal/uncertainty":  true,
	"corvane/internal/qa/qapage":    true,
	"corvane/internal/coreinterval": true,
	"corvane/internal/spacing":      true,
	"corvane/internal/structdomain": true,
	"corvane/internal/kinematic":    true,
	"corvane/internal/geotech":      true,
	"corvane/internal/words":        true,
	"corvane/internal/jsonnum":      true,
	"corvane/internal/palette":      true,
	// Transfer formats: neutral inputs and their writers/readers.
	"corvane/internal/exchange":              true,
	"corvane/internal/exchange/exchangetest": true,
	"corvane/internal/exchange/gltf":         true,
	"corvane/internal/exchange/geojson":      true,
	"corvane/internal/exchange/ags4":         true,
}

// noServiceDeps lists packages that must stay free of HTTP and SQL.
var noServiceDeps = []string{
	"corvane/internal/domain",
	"corvane/internal/csvio",
	"corvane/internal/service",
	"corvane/internal/convert",
	"corvane/internal/exchange/transfer",
}

func isStd(p string) bool {
	first := strings.SplitN(p, "/", 2)[0]
	return !strings.Contains(first, ".") && !strings.HasPrefix(p, module)
}

func isHTTPorSQL(p string) bool {
	switch {
	case p == "net/http", strings.HasPrefix(p, "net/http/"),
		p == "database/sql", strings.HasPrefix(p, "database/sql/"),
		strings.HasPrefix(p, "github.com/gin-gonic/"),
		strings.HasPrefix(p, "github.com/jackc/"),
		strings.HasPrefix(p, "modernc.org/sqlite"),
		strings.HasPrefix(p, "github.com/golang-migrate/"):
		return true
	}
	return false
}

// deps returns, for every package of the module, the packages it imports
// directly or indirectly, as `go list -deps` reports them.
func deps(t *testing.T) map[string][]string {
	t.Helper()
	cmd := exec.Command("go", "list", "-f", `{{.ImportPath}}{{range .Deps}} {{.}}{{end}}`, "corvane/...")
	cmd.Dir = "../.."
	var stderr bytes.Buffer
	cmd.Stderr = &stderr
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("go list: %v\n%s", err, stderr.String())
	}
	m := map[string][]string{}
	sc := bufio.NewScanner(bytes.NewReader(out))
	sc.Buffer(make([]byte, 1<<20), 1<<24)
	for sc.Scan() {
		f := strings.Fields(sc.Text())
		if len(f) > 0 {
			m[f[0]] = f[1:]
		}
	}
	if len(m) == 0 {
		t.Fatal("go list returned no packages")
	}
	return m
}

func TestLayering(t *testing.T) {
	all := deps(t)
	for pkg, ds := range all {
		for _, d := range ds {
			if pure[pkg] {
				ok := isStd(d) || strings.HasPrefix(d, "gonum.org/") || pure[d] ||
					strings.HasPrefix(d, "golang.org/x/") // gonum's own dependencies
				if !ok {
					t.Errorf("%s is a pure computation package but imports %s", pkg, d)
				}
			}
			if strings.HasPrefix(d, "github.com/gin-gonic/gin") && !strings.HasPrefix(pkg, "corvane/internal/httpapi") &&
				!strings.HasPrefix(pkg, "corvane/internal/cli") && !strings.HasPrefix(pkg, "corvane/cmd/") &&
				!strings.HasPrefix(pkg, "corvane/internal/web") {
				// Only httpapi imports gin itself; the composition root reaches it through httpapi.
				t.Errorf("%s reaches gin; only internal/httpapi may use it", pkg)
			}
		}
	}
	// The stores own what they need (package store/dburl for database
	// addresses): nothing under internal/store reaches the configuration.
	for pkg, ds := range all {
		if !strings.HasPrefix(pkg, "corvane/internal/store") {
			continue
		}
		for _, d := range ds {
			if d == "corvane/internal/config" || strings.HasPrefix(d, "corvane/internal/cli") {
				t.Errorf("%s reaches %s: the dependency runs from the wiring down to the stores, not up", pkg, d)
			}
		}
	}
	for _, pkg := range noServiceDeps {
		for _, d := range all[pkg] {
			if isHTTPorSQL(d) {
				t.Errorf("%s must not import HTTP or SQL packages, but reaches %s", pkg, d)
			}
		}
	}
}

// TestOnlyHTTPAPIImportsGin checks direct imports: gin appears in the import
// list of internal/httpapi alone.
func TestOnlyHTTPAPIImportsGin(t *testing.T) {
	cmd := exec.Command("go", "list", "-f", `{{.ImportPath}}{{range .Imports}} {{.}}{{end}}`, "corvane/...")
	cmd.Dir = "../.."
	out, err := cmd.Output()
	if err != nil {
		t.Fatalf("go list: %v", err)
	}
	for _, line := range strings.Split(string(out), "\n") {
		f := strings.Fields(line)
		if len(f) == 0 {
			continue
		}
		for _, d := range f[1:] {
			if strings.HasPrefix(d, "github.com/gin-gonic/") && !strings.HasPrefix(f[0], "corvane/internal/httpapi") {
				t.Errorf("%s imports %s directly; only internal/httpapi may", f[0], d)
			}
			if (strings.HasPrefix(d, "github.com/jackc/pgx") || d == "modernc.org/sqlite") &&
				!strings.HasPrefix(f[0], "corvane/internal/store/") && !strings.HasPrefix(f[0], "corvane/internal/pgtest") &&
				!strings.HasPrefix(f[0], "corvane/migrations") {
				t.Errorf("%s imports the database driver %s; only the stores may", f[0], d)
			}
		}
	}
}
