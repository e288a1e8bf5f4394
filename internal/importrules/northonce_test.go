package importrules

import (
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"strings"
	"testing"
)

// Only internal/holemodel corrects north: no other package computes a
// declination or grid convergence to apply it, or adds one to an azimuth.
// The demo generator is the one exception for computing: it turns the
// invented programme's true azimuths into recorded magnetic ones, the
// forward model of its data, and corrects nothing.
func TestOnlyHoleModelCorrectsNorth(t *testing.T) {
	compute := regexp.MustCompile(`northref\.Corrections(Model|Year)?\(`)
	// An azimuth and a declination or convergence in one sum.
	apply := regexp.MustCompile(`(?i)(azimuth\w*|\baz\b)\s*[-+]=?\s*[\w.()]*(decl|conv)|(decl|conv)\w*(\.value)?\s*[-+]\s*[\w.()]*azimuth`)
	allowCompute := map[string]bool{"internal/holemodel": true, "internal/demo": true}
	root := filepath.Join("..", "..")
	checked := 0
	err := filepath.WalkDir(root, func(path string, d fs.DirEntry, err error) error {
		if err != nil {
			return err
		}
		if d.IsDir() && (d.Name() == "node_modules" || strings.HasPrefix(d.Name(), ".")) && path != root {
			return filepath.SkipDir
		}
		if d.IsDir() || !strings.HasSuffix(path, ".go") || strings.HasSuffix(path, "_test.go") {
			return nil
		}
		rel, _ := filepath.Rel(root, path)
		dir := filepath.ToSlash(filepath.Dir(rel))
		if dir == "internal/holemodel" || dir == "internal/northref" {
			return nil
		}
		b, err := os.ReadFile(path)
		if err != nil {
			return err
		}
		checked++
		for i, line := range strings.Split(string(b), "\n") {
			code, _, _ := strings.Cut(line, "//")
			if compute.MatchString(code) && !allowCompute[dir] {
				t.Errorf("%s:%d computes a north correction outside internal/holemodel: %s", rel, i+1, strings.TrimSpace(line))
			}
			if apply.MatchString(code) && dir != "internal/demo" {
				t.Errorf("%s:%d applies a north correction outside internal/holemodel: %s", rel, i+1, strings.TrimSpace(line))
			}
		}
		return nil
	})
	if err != nil {
		t.Fatal(err)
	}
	if checked < 50 {
		t.Fatalf("only %d Go files checked; is the walk rooted at the module?", checked)
	}
}
