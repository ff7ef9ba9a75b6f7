package qc

import (
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"testing"
)

// requireRefs reports whether CI demands the outside references
// (CLINAL_REQUIRE_REFS=1): a missing tool or fixture then fails the test
// instead of skipping it.
func requireRefs() bool { return os.Getenv("CLINAL_REQUIRE_REFS") == "1" }

// missingRef skips the test (or fails it under CLINAL_REQUIRE_REFS=1)
// because an outside reference is absent.
func missingRef(t testing.TB, format string, a ...any) {
	t.Helper()
	if requireRefs() {
		t.Fatalf("reference missing (CLINAL_REQUIRE_REFS=1): "+format, a...)
	}
	t.Skipf("reference missing, skipping: "+format, a...)
}

// lookTool returns the path of an external program, or skips/fails.
func lookTool(t testing.TB, name string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err != nil {
		missingRef(t, "%s not found in PATH (Debian package needed)", name)
	}
	return p
}

// fixture returns the path of a file under testdata/ (relative to the
// module root), or skips/fails when it does not exist.
func fixture(t testing.TB, rel string) string {
	t.Helper()
	p := filepath.Join("..", "testdata", filepath.FromSlash(rel))
	if _, err := os.Stat(p); err != nil {
		missingRef(t, "%s absent (run bash testdata/setup-refs.sh)", p)
	}
	return p
}

// runR runs an R script with arguments and returns its output; exit status
// 3 from the script means an R package is missing (skip or fail).
func runR(t testing.TB, script string, args ...string) string {
	t.Helper()
	rs := lookTool(t, "Rscript")
	cmd := exec.Command(rs, append([]string{"--vanilla", script}, args...)...)
	out, err := cmd.CombinedOutput()
	if err != nil {
		if ee, ok := err.(*exec.ExitError); ok && ee.ExitCode() == 3 {
			missingRef(t, "%s", strings.TrimSpace(string(out)))
		}
		t.Fatalf("Rscript %s: %v\n%s", script, err, out)
	}
	return string(out)
}
