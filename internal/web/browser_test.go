package web_test

import (
	"context"
	"flag"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

var updateScreenshots = flag.Bool("update-screenshots", false, "copy each view's screenshot to docs/screenshots")

// chromiumPath finds Debian's Chromium. Without it the browser tests skip
// loudly, or fail when CORVANE_REQUIRE_BROWSER=1.
func chromiumPath(t *testing.T) string {
	t.Helper()
	for _, p := range []string{os.Getenv("CORVANE_CHROMIUM"), "/usr/bin/chromium", "/usr/bin/chromium-browser"} {
		if p == "" {
			continue
		}
		if _, err := os.Stat(p); err == nil {
			return p
		}
	}
	if p, err := exec.LookPath("chromium"); err == nil {
		return p
	}
	if os.Getenv("CORVANE_REQUIRE_BROWSER") == "1" {
		t.Fatal("CORVANE_REQUIRE_BROWSER=1 but no Chromium found (install the chromium package)")
	}
	t.Skip("SKIPPING browser test: no Chromium found (apt-get install chromium); set CORVANE_REQUIRE_BROWSER=1 to make this a failure")
	return ""
}

// page is one browser tab on the page under test. It collects every console
// error, uncaught exception and browser log error; the test fails on any
// that it did not declare expected.
type page struct {
	t       *testing.T
	ctx     context.Context
	base    string
	shots   string
	mu      sync.Mutex
	errs    []string
	allowed []string
}

// One Chromium serves every browser test of the package; each test gets its
// own tab (and so its own sessionStorage).
var shared struct {
	once    sync.Once
	ctx     context.Context
	err     error
	cancel  func()
	profile string
}

func TestMain(m *testing.M) {
	flag.Parse()
	code := m.Run()
	stopService()
	if shared.cancel != nil {
		shared.cancel()
	}
	if shared.profile != "" {
		os.RemoveAll(shared.profile)
	}
	os.Exit(code)
}

func browserContext(t *testing.T) context.Context {
	t.Helper()
	exe := chromiumPath(t)
	shared.once.Do(func() {
		shared.profile, shared.err = os.MkdirTemp("", "corvane-chromium-")
		if shared.err != nil {
			return
		}
		opts := append(chromedp.DefaultExecAllocatorOptions[:],
			chromedp.ExecPath(exe),
			chromedp.Headless,
			chromedp.NoSandbox,
			chromedp.DisableGPU,
			chromedp.NoFirstRun,
			chromedp.Flag("disable-quic", true),
			chromedp.Flag("disable-background-networking", true),
			chromedp.Flag("disable-component-update", true),
			chromedp.Flag("disable-sync", true),
			chromedp.Flag("hide-scrollbars", true),
			chromedp.Flag("mute-audio", true),
			chromedp.UserDataDir(shared.profile),
		)
		actx, cancelA := chromedp.NewExecAllocator(context.Background(), opts...)
		bctx, cancelB := chromedp.NewContext(actx)
		shared.cancel = func() { cancelB(); cancelA() }
		// The first Run starts the browser; it must not carry a timeout.
		shared.err = chromedp.Do(bctx)
		shared.ctx = bctx
	})
	if shared.err != nil {
		t.Fatalf("starting Chromium: %v", shared.err)
	}
	return shared.ctx
}

func newPage(t *testing.T, base string, width, height int) *page {
	t.Helper()
	ctx, cancel := chromedp.NewContext(browserContext(t))
	shots := t.TempDir()
	if d := os.Getenv("CORVANE_SCREENSHOTS_DIR"); d != "" { // keep them to look at
		shots = filepath.Join(d, t.Name())
		if err := os.MkdirAll(shots, 0o755); err != nil {
			t.Fatal(err)
		}
	}
	p := &page{t: t, ctx: ctx, base: base, shots: shots}
	if err := chromedp.Do(ctx, chromedp.EmulateViewport(int64(width), int64(height))); err != nil {
		cancel()
		t.Fatalf("opening a tab: %v", err)
	}
	messages := chromedp.Console(ctx)
	done := make(chan struct{})
	go func() {
		defer close(done)
		for m, err := range messages {
			if err != nil {
				return
			}
			if m.Type == chromedp.ConsoleError || m.IsException() || m.Type == "assert" {
				p.addErr(fmt.Sprintf("%s %s %s", m.Type, m.Source, m.String()) + " " + m.URL)
			}
		}
	}()
	t.Cleanup(func() {
		cancel()
		<-done
		p.checkErrors()
	})
	return p
}

func (p *page) addErr(s string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.errs = append(p.errs, s)
}

// allow declares a browser error the test provokes on purpose (for example
// the network log line of a 412 answer).
func (p *page) allow(substr string) {
	p.mu.Lock()
	defer p.mu.Unlock()
	p.allowed = append(p.allowed, substr)
}

func (p *page) checkErrors() {
	p.mu.Lock()
	defer p.mu.Unlock()
next:
	for _, e := range p.errs {
		for _, a := range p.allowed {
			if strings.Contains(e, a) {
				continue next
			}
		}
		p.t.Errorf("browser error: %s", e)
	}
}

func (p *page) do(what string, steps ...chromedp.Action[chromedp.Void]) {
	p.t.Helper()
	ctx, cancel := context.WithTimeout(p.ctx, 30*time.Second)
	defer cancel()
	if err := chromedp.Do(ctx, steps...); err != nil {
		p.shot("failed-" + strings.NewReplacer(" ", "-", "#", "", "'", "", "\"", "", "/", "-").Replace(what))
		p.t.Fatalf("%s: %v", what, err)
	}
}

// text returns the text of the first node matching the CSS selector sel,
// after waiting for it to be visible.
func (p *page) text(sel string) string {
	p.t.Helper()
	p.do("see "+sel, chromedp.WaitVisible(chromedp.CSS(sel)))
	ctx, cancel := context.WithTimeout(p.ctx, 30*time.Second)
	defer cancel()
	s, err := chromedp.Run(ctx, chromedp.TextContent(chromedp.CSS(sel)))
	if err != nil {
		p.t.Fatalf("reading %s: %v", sel, err)
	}
	return strings.TrimSpace(s)
}

// eval evaluates a JavaScript expression in the page (awaiting a promise)
// and decodes its value into out.
func eval[T any](p *page, expr string) T {
	p.t.Helper()
	ctx, cancel := context.WithTimeout(p.ctx, 30*time.Second)
	defer cancel()
	v, err := chromedp.Run(ctx, chromedp.Evaluate[T](expr, chromedp.EvalAwaitPromise))
	if err != nil {
		p.t.Fatalf("evaluating %s: %v", expr, err)
	}
	return v
}

// waitFor polls a JavaScript condition until it is true.
func (p *page) waitFor(what, cond string) {
	p.t.Helper()
	ctx, cancel := context.WithTimeout(p.ctx, 30*time.Second)
	defer cancel()
	if _, err := chromedp.Run(ctx, chromedp.Poll[chromedp.Void](cond, chromedp.WithPollingTimeout(20*time.Second), chromedp.WithPollingInterval(50*time.Millisecond))); err != nil {
		p.shot("failed-wait")
		p.t.Fatalf("waiting for %s (%s): %v", what, cond, err)
	}
}

// keys types v into the focused element as key presses.
func (p *page) keys(v string) {
	p.t.Helper()
	p.do("type "+v, chromedp.KeyEvent(v))
}

// shot saves a full-page screenshot in the test's temp dir and, with
// -update-screenshots, as docs/screenshots/NAME.png for reviewers.
func (p *page) shot(name string) {
	ctx, cancel := context.WithTimeout(p.ctx, 30*time.Second)
	defer cancel()
	buf, err := chromedp.Run(ctx, chromedp.FullScreenshot(100))
	if err != nil {
		p.t.Logf("screenshot %s: %v", name, err)
		return
	}
	path := filepath.Join(p.shots, name+".png")
	if err := os.WriteFile(path, buf, 0o644); err != nil {
		p.t.Errorf("saving screenshot: %v", err)
	}
	p.t.Logf("screenshot %s", path)
	if *updateScreenshots && !strings.HasPrefix(name, "failed-") {
		if err := os.WriteFile(filepath.Join("..", "..", "docs", "screenshots", name+".png"), buf, 0o644); err != nil {
			p.t.Errorf("saving screenshot for docs: %v", err)
		}
	}
}

// signIn opens the page, types the token on the sign-in screen and waits
// for the programme overview.
func (p *page) signIn(token string) {
	p.t.Helper()
	p.do("open page", chromedp.Navigate(p.base+"/"), chromedp.WaitVisible(chromedp.CSS("#token")))
	p.do("type token", chromedp.SendKeys(chromedp.CSS("#token"), token+"\r"))
	p.waitFor("overview", `document.querySelector('#holes-table tbody tr') !== null`)
}
