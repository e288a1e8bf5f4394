package exchangetest

import (
	"encoding/json"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"testing"
)

// ValidatorReport is the part of the Khronos glTF validator's report the
// tests read.
type ValidatorReport struct {
	Issues struct {
		NumErrors   int `json:"numErrors"`
		NumWarnings int `json:"numWarnings"`
		Messages    []struct {
			Code     string `json:"code"`
			Message  string `json:"message"`
			Severity int    `json:"severity"`
			Pointer  string `json:"pointer"`
		} `json:"messages"`
	} `json:"issues"`
	Info struct {
		DrawCallCount int `json:"drawCallCount"`
	} `json:"info"`
}

// ValidatorDir returns where tools/gltf-validator installs the Khronos glTF
// validator (npm package gltf-validator, the reference checker of the glTF
// 2.0 specification). Without Node or the module the test is skipped, or
// fails under CI=true or CORVANE_REQUIRE_GLTF_VALIDATOR=1.
func ValidatorDir(t testing.TB) string {
	t.Helper()
	dir, err := os.Getwd()
	if err != nil {
		t.Fatal(err)
	}
	for {
		if _, err := os.Stat(filepath.Join(dir, "go.mod")); err == nil {
			break
		}
		up := filepath.Dir(dir)
		if up == dir {
			t.Fatal("no go.mod above the test's directory")
		}
		dir = up
	}
	dir = filepath.Join(dir, "tools", "gltf-validator")
	require := os.Getenv("CI") == "true" || os.Getenv("CORVANE_REQUIRE_GLTF_VALIDATOR") == "1"
	_, errNode := exec.LookPath("node")
	_, errMod := os.Stat(filepath.Join(dir, "node_modules", "gltf-validator"))
	if errNode != nil || errMod != nil {
		msg := fmt.Sprintf("Khronos glTF validator not available (node: %v; module: %v); install with: npm ci --prefix tools/gltf-validator", errNode, errMod)
		if require {
			t.Fatal(msg)
		}
		t.Skip(msg)
	}
	return dir
}

// Validate runs the validator in dir on a .glb or .gltf file (a .gltf's
// .bin is read from beside it).
func Validate(t testing.TB, dir, file string) ValidatorReport {
	t.Helper()
	out, err := exec.Command("node", filepath.Join(dir, "validate.js"), file).Output()
	if err != nil {
		var ee *exec.ExitError
		if errors.As(err, &ee) {
			t.Fatalf("validator on %s: %v\n%s", file, err, ee.Stderr)
		}
		t.Fatalf("validator on %s: %v", file, err)
	}
	var r ValidatorReport
	if err := json.Unmarshal(out, &r); err != nil {
		t.Fatalf("validator report: %v\n%s", err, out)
	}
	return r
}

// RequireValid validates files and fails the test on any error (severity
// 0) or a scene with nothing to draw; warnings are logged.
func RequireValid(t testing.TB, dir string, files ...string) {
	t.Helper()
	for _, f := range files {
		r := Validate(t, dir, f)
		if r.Issues.NumErrors != 0 {
			t.Errorf("%s: %d errors", filepath.Base(f), r.Issues.NumErrors)
		}
		for _, m := range r.Issues.Messages {
			if m.Severity == 0 {
				t.Errorf("%s: %s %s at %s", filepath.Base(f), m.Code, m.Message, m.Pointer)
			} else {
				t.Logf("%s: severity %d %s %s at %s", filepath.Base(f), m.Severity, m.Code, m.Message, m.Pointer)
			}
		}
		if r.Info.DrawCallCount == 0 {
			t.Errorf("%s: the validator saw nothing to draw", filepath.Base(f))
		}
	}
}
