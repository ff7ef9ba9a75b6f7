package report

import (
	"bytes"
	"context"
	"image"
	"image/color"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"syscall"
	"testing"
	"time"
)

// reportTool returns the path of an external program a test needs. When
// it is absent the test skips, unless CLINAL_REQUIRE_REFS=1 (CI), where
// it fails.
func reportTool(t *testing.T, name, pkg string) string {
	t.Helper()
	p, err := exec.LookPath(name)
	if err == nil {
		return p
	}
	msg := name + " not found (Debian package " + pkg + ": apt-get install --no-install-recommends " + pkg + ")"
	if os.Getenv("CLINAL_REQUIRE_REFS") == "1" {
		t.Fatal(msg + "; CLINAL_REQUIRE_REFS=1 requires it")
	}
	t.Skip(msg)
	return ""
}

// chromium runs Debian's headless Chromium on a local file with the
// given extra flags, no network, a throw-away profile, and its log on
// stderr (console messages appear there as "INFO:CONSOLE" lines).
func chromium(t *testing.T, bin, url string, extra ...string) (stdout, stderr []byte) {
	t.Helper()
	tmp := t.TempDir()
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	args := append([]string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--user-data-dir=" + filepath.Join(tmp, "profile"), "--enable-logging=stderr", "--v=0",
		"--window-size=1200,1600"}, extra...)
	cmd := exec.CommandContext(ctx, bin, append(args, url)...)
	cmd.Env = append(os.Environ(), "HOME="+tmp)
	cmd.SysProcAttr = &syscall.SysProcAttr{Setpgid: true}
	cmd.Cancel = func() error { return syscall.Kill(-cmd.Process.Pid, syscall.SIGKILL) } // chromium and its helpers
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium %v: %v\n%s", extra, err, tail(errb.String(), 2000))
	}
	return out.Bytes(), errb.Bytes()
}

func tail(s string, n int) string {
	if len(s) > n {
		return s[len(s)-n:]
	}
	return s
}

// consoleProblems returns the log lines that report a page problem: any
// console message (the report has no script, so there should be none),
// an uncaught exception, or a resource that failed to load.
func consoleProblems(log []byte) []string {
	var bad []string
	for _, l := range strings.Split(string(log), "\n") {
		if strings.Contains(l, ":CONSOLE") || strings.Contains(l, "Uncaught") ||
			strings.Contains(l, "Failed to load resource") || strings.Contains(l, "net::ERR_") {
			bad = append(bad, l)
		}
	}
	return bad
}

// TestReportInChromium opens the PCA report in a real headless Chromium
// (Debian's chromium package): the page renders without console errors
// (and a page with a failing script, as a control, is caught by the same
// check), the DOM Chromium built holds one disc per sample in the PC1-PC2
// scatter and every group name in its legend, and the screenshot is a
// real rendering containing every group's colour. The screenshot is kept
// for CI at a stable path under the temporary directory.
func TestReportInChromium(t *testing.T) {
	bin := reportTool(t, "chromium", "chromium")
	in := pcaFixture(t, meridian, 14, 5, 300, 4, 21)
	path := writeFixture(t, in)
	url := "file://" + path

	// Control: the console check sees a script error.
	badPage := filepath.Join(t.TempDir(), "bad.html")
	os.WriteFile(badPage, []byte(`<!DOCTYPE html><html><body><p>x</p><script>throw new Error("planted");</script></body></html>`), 0o644)
	_, log := chromium(t, bin, "file://"+badPage, "--dump-dom")
	if p := consoleProblems(log); len(p) == 0 || !strings.Contains(strings.Join(p, "\n"), "Uncaught Error: planted") {
		t.Fatalf("the console check missed a planted script error; log:\n%s", tail(string(log), 2000))
	}

	dom, log := chromium(t, bin, url, "--dump-dom")
	if p := consoleProblems(log); len(p) > 0 {
		t.Errorf("console problems while rendering the report:\n%s", strings.Join(p, "\n"))
	}
	s := string(dom)
	for _, id := range []string{`<figure id="pc12">`, `<figure id="pc34">`, `<figure id="scree">`, `id="convergence"`, `id="qc"`, `id="timing"`} {
		if !strings.Contains(s, id) {
			t.Errorf("rendered DOM lacks %s", id)
		}
	}
	i := strings.Index(s, `<figure id="pc12">`)
	j := strings.Index(s[max(i, 0):], "</figure>")
	if i < 0 || j < 0 {
		t.Fatalf("no pc12 figure in the DOM (%d bytes)", len(dom))
	}
	fig, err := parseSVG(strings.NewReader(s[i : i+j+len("</figure>")]))
	if err != nil {
		t.Fatalf("parse the DOM's pc12 figure: %v", err)
	}
	if len(fig.marks) != len(in.SampleIDs) {
		t.Errorf("DOM scatter has %d sample discs, want %d", len(fig.marks), len(in.SampleIDs))
	}
	leg := legendEntries(fig)
	for _, g := range append(append([]string(nil), meridian...), UnlabelledName) {
		if _, ok := leg[g]; !ok {
			t.Errorf("DOM legend lacks group %q (has %v)", g, leg)
		}
	}

	shot := filepath.Join(t.TempDir(), "report.png")
	_, log = chromium(t, bin, url, "--screenshot="+shot)
	if p := consoleProblems(log); len(p) > 0 {
		t.Errorf("console problems while taking the screenshot:\n%s", strings.Join(p, "\n"))
	}
	b, err := os.ReadFile(shot)
	if err != nil {
		t.Fatalf("no screenshot: %v", err)
	}
	img, err := png.Decode(bytes.NewReader(b))
	if err != nil {
		t.Fatalf("screenshot: %v", err)
	}
	if sz := img.Bounds().Size(); sz.X != 1200 || sz.Y != 1600 {
		t.Errorf("screenshot %v, want 1200x1600", sz)
	}
	counts := colourCounts(img)
	nonWhite := 0
	for c, n := range counts {
		if c != (color.NRGBA{255, 255, 255, 255}) {
			nonWhite += n
		}
	}
	if nonWhite < 20000 || len(counts) < 50 {
		t.Errorf("screenshot looks blank: %d non-white pixels, %d colours", nonWhite, len(counts))
	}
	gs := makeGroups(in.Groups, len(in.Groups))
	for g, name := range gs.names {
		c, _ := gs.style(g)
		if n := counts[color.NRGBAModel.Convert(c).(color.NRGBA)]; n < 50 {
			t.Errorf("screenshot has %d pixels of %s's colour %s", n, name, hexColor(c))
		}
	}
	stable := filepath.Join(os.TempDir(), "clinal-report-screenshot.png")
	if err := os.WriteFile(stable, b, 0o644); err != nil {
		t.Fatal(err)
	}
	t.Logf("screenshot: %s", stable)
}

func colourCounts(img image.Image) map[color.NRGBA]int {
	out := map[color.NRGBA]int{}
	r := img.Bounds()
	for y := r.Min.Y; y < r.Max.Y; y++ {
		for x := r.Min.X; x < r.Max.X; x++ {
			out[color.NRGBAModel.Convert(img.At(x, y)).(color.NRGBA)]++
		}
	}
	return out
}
