package batch

import (
	"bufio"
	"context"
	"encoding/base64"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"os"
	"os/exec"
	"path/filepath"
	"strings"
	"sync"
	"testing"
	"time"
)

// cdp is a minimal client of the Chrome DevTools Protocol over the pipe
// Chromium opens with --remote-debugging-pipe: JSON messages separated by
// NUL bytes, commands written to the browser's fd 3 and replies and events
// read from its fd 4. It serves one page session.
type cdp struct {
	cmd     *exec.Cmd
	w       io.WriteCloser
	mu      sync.Mutex
	next    int
	waiting map[int]chan cdpMsg
	events  chan cdpMsg
	done    chan struct{}
	session string
}

type cdpMsg struct {
	ID        int             `json:"id,omitempty"`
	Method    string          `json:"method,omitempty"`
	SessionID string          `json:"sessionId,omitempty"`
	Params    json.RawMessage `json:"params,omitempty"`
	Result    json.RawMessage `json:"result,omitempty"`
	Error     *struct {
		Message string `json:"message"`
	} `json:"error,omitempty"`
}

// startChromium starts headless Chromium with a fresh profile in a
// temporary folder and no network services of its own.
func startChromium(t *testing.T, bin string) *cdp {
	t.Helper()
	toBrowser, ourEnd, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	fromBrowser, theirEnd, err := os.Pipe()
	if err != nil {
		t.Fatal(err)
	}
	cmd := exec.Command(bin,
		"--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
		"--disable-background-networking", "--disable-component-update", "--disable-sync",
		"--disable-default-apps", "--disable-extensions", "--mute-audio", "--hide-scrollbars",
		"--remote-debugging-pipe", "--user-data-dir="+t.TempDir(), "about:blank")
	cmd.ExtraFiles = []*os.File{toBrowser, theirEnd} // fd 3, fd 4
	var stderr strings.Builder
	cmd.Stderr = &stderr
	if err := cmd.Start(); err != nil {
		t.Fatalf("starting %s: %v", bin, err)
	}
	toBrowser.Close()
	theirEnd.Close()
	c := &cdp{cmd: cmd, w: ourEnd, waiting: map[int]chan cdpMsg{}, events: make(chan cdpMsg, 4096), done: make(chan struct{})}
	go c.read(fromBrowser)
	t.Cleanup(func() {
		ctx, cancel := context.WithTimeout(context.Background(), 5*time.Second)
		defer cancel()
		c.call(ctx, "Browser.close", nil, nil) // the browser may close before it answers
		c.w.Close()
		exited := make(chan struct{})
		go func() { cmd.Wait(); close(exited) }()
		select {
		case <-exited:
		case <-time.After(5 * time.Second):
			cmd.Process.Kill()
			<-exited
		}
		if t.Failed() {
			t.Logf("chromium stderr (tail):\n%s", stderrTail(stderr.String(), 2000))
		}
	})
	return c
}

func stderrTail(s string, n int) string {
	if len(s) > n {
		return s[len(s)-n:]
	}
	return s
}

func (c *cdp) read(r io.Reader) {
	defer close(c.done)
	br := bufio.NewReaderSize(r, 1<<20)
	for {
		b, err := br.ReadBytes(0)
		if err != nil {
			return
		}
		var m cdpMsg
		if json.Unmarshal(b[:len(b)-1], &m) != nil {
			continue
		}
		if m.ID != 0 {
			c.mu.Lock()
			ch := c.waiting[m.ID]
			delete(c.waiting, m.ID)
			c.mu.Unlock()
			if ch != nil {
				ch <- m
			}
			continue
		}
		select {
		case c.events <- m:
		default: // nobody listens this far behind; drop
		}
	}
}

// call sends a command (to the page session once attached) and waits for
// its result.
func (c *cdp) call(ctx context.Context, method string, params any, result any) error {
	c.mu.Lock()
	c.next++
	id := c.next
	ch := make(chan cdpMsg, 1)
	c.waiting[id] = ch
	c.mu.Unlock()
	msg := map[string]any{"id": id, "method": method}
	if params != nil {
		msg["params"] = params
	}
	if c.session != "" && !strings.HasPrefix(method, "Target.") && !strings.HasPrefix(method, "Browser.") {
		msg["sessionId"] = c.session
	}
	b, err := json.Marshal(msg)
	if err != nil {
		return err
	}
	if _, err := c.w.Write(append(b, 0)); err != nil {
		return fmt.Errorf("%s: %w", method, err)
	}
	select {
	case m := <-ch:
		if m.Error != nil {
			return fmt.Errorf("%s: %s", method, m.Error.Message)
		}
		if result != nil {
			return json.Unmarshal(m.Result, result)
		}
		return nil
	case <-c.done:
		return fmt.Errorf("%s: browser closed the pipe", method)
	case <-ctx.Done():
		return fmt.Errorf("%s: %w", method, ctx.Err())
	}
}

// pageReport is what the browser saw of one page load.
type pageReport struct {
	Console  []string // console errors and uncaught exceptions
	Requests []string // every URL the page requested
	Charts   []struct {
		ID            string
		Width, Height float64
	}
	PNG []byte
}

// loadPage opens url in a new tab, waits for the load event and a quiet
// moment, measures every svg element and takes a full-page screenshot.
func (c *cdp) loadPage(ctx context.Context, url string, width int, media string) (*pageReport, error) {
	var target struct{ TargetID string }
	if err := c.call(ctx, "Target.createTarget", map[string]any{"url": "about:blank"}, &target); err != nil {
		return nil, err
	}
	var att struct{ SessionID string }
	if err := c.call(ctx, "Target.attachToTarget", map[string]any{"targetId": target.TargetID, "flatten": true}, &att); err != nil {
		return nil, err
	}
	c.session = att.SessionID
	for _, m := range []string{"Page.enable", "Runtime.enable", "Log.enable", "Network.enable"} {
		if err := c.call(ctx, m, nil, nil); err != nil {
			return nil, err
		}
	}
	if err := c.call(ctx, "Emulation.setDeviceMetricsOverride", map[string]any{
		"width": width, "height": 900, "deviceScaleFactor": 1, "mobile": false}, nil); err != nil {
		return nil, err
	}
	if err := c.call(ctx, "Emulation.setEmulatedMedia", map[string]any{"media": media}, nil); err != nil {
		return nil, err
	}
	rep := &pageReport{}
	if err := c.call(ctx, "Page.navigate", map[string]any{"url": url}, nil); err != nil {
		return nil, err
	}
	loaded := false
	quiet := time.NewTimer(time.Hour)
	for !loaded || quiet != nil {
		select {
		case m := <-c.events:
			rep.note(m)
			if m.Method == "Page.loadEventFired" {
				loaded = true
				quiet.Reset(500 * time.Millisecond)
			}
		case <-quiet.C:
			quiet = nil
		case <-c.done:
			return nil, errors.New("browser closed the pipe")
		case <-ctx.Done():
			return nil, fmt.Errorf("waiting for the page to load: %w", ctx.Err())
		}
	}
	var ev struct {
		Result struct {
			Value string
		}
		ExceptionDetails json.RawMessage
	}
	js := `JSON.stringify(Array.from(document.querySelectorAll('svg')).map((s, i) => {
		const r = s.getBoundingClientRect();
		return {ID: (s.closest('figure') || {}).id || ('svg' + i), Width: r.width, Height: r.height};
	}))`
	if err := c.call(ctx, "Runtime.evaluate", map[string]any{"expression": js, "returnByValue": true}, &ev); err != nil {
		return nil, err
	}
	if len(ev.ExceptionDetails) > 0 {
		return nil, fmt.Errorf("measuring charts: %s", ev.ExceptionDetails)
	}
	if err := json.Unmarshal([]byte(ev.Result.Value), &rep.Charts); err != nil {
		return nil, fmt.Errorf("measuring charts: %v (%q)", err, ev.Result.Value)
	}
	var shot struct{ Data string }
	if err := c.call(ctx, "Page.captureScreenshot", map[string]any{"format": "png", "captureBeyondViewport": true}, &shot); err != nil {
		return nil, err
	}
	png, err := base64.StdEncoding.DecodeString(shot.Data)
	if err != nil {
		return nil, err
	}
	rep.PNG = png
	// Events that arrived while measuring.
	for {
		select {
		case m := <-c.events:
			rep.note(m)
		default:
			return rep, nil
		}
	}
}

func (r *pageReport) note(m cdpMsg) {
	switch m.Method {
	case "Network.requestWillBeSent":
		var p struct{ Request struct{ URL string } }
		if json.Unmarshal(m.Params, &p) == nil {
			r.Requests = append(r.Requests, p.Request.URL)
		}
	case "Runtime.consoleAPICalled":
		var p struct {
			Type string
			Args []struct {
				Value       any
				Description string
			}
		}
		if json.Unmarshal(m.Params, &p) == nil && (p.Type == "error" || p.Type == "assert") {
			r.Console = append(r.Console, fmt.Sprintf("console.%s %v", p.Type, p.Args))
		}
	case "Runtime.exceptionThrown":
		r.Console = append(r.Console, "exception: "+string(m.Params))
	case "Log.entryAdded":
		var p struct {
			Entry struct{ Level, Text, URL string }
		}
		if json.Unmarshal(m.Params, &p) == nil && p.Entry.Level == "error" {
			r.Console = append(r.Console, "log: "+p.Entry.Text+" "+p.Entry.URL)
		}
	}
}

// chromiumPath returns the Chromium binary, or "" when there is none.
func chromiumPath() string {
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	return ""
}

// TestReportInChromium renders the report of a cut-down demo run (2,000
// cases, Sobol indices with 64 base rows) in headless Chromium and checks
// that the page loads without console errors, that every chart has a
// size, and that the page requests nothing but its own file. It saves a
// full-page screenshot: in the test's temporary folder, or, with
// SWEEPSTAT_REPORT_KEEP=DIR, in DIR as report.png together with the
// report, its charts and report-print.png (the page in print media at A4
// width). .ci/run installs Chromium and sets SWEEPSTAT_REQUIRE_CHROMIUM,
// which turns a missing browser into a failure.
func TestReportInChromium(t *testing.T) {
	t.Parallel()
	bin := chromiumPath()
	if bin == "" {
		if os.Getenv("SWEEPSTAT_REQUIRE_CHROMIUM") != "" {
			t.Fatal("Chromium not found on PATH, and SWEEPSTAT_REQUIRE_CHROMIUM is set (apt-get install chromium chromium-driver)")
		}
		t.Skip("Chromium not found on PATH; install the Debian packages chromium and chromium-driver to run this test")
	}
	st := smallStudy(t, 2000)
	st.Sensitivity.Sobol = 64
	out := t.TempDir()
	runInto(t, st, out, 2)
	dir := filepath.Join(out, st.Name)
	page, err := filepath.Abs(filepath.Join(dir, ReportFile))
	if err != nil {
		t.Fatal(err)
	}

	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	c := startChromium(t, bin)
	rep, err := c.loadPage(ctx, "file://"+page, 1280, "screen")
	if err != nil {
		t.Fatal(err)
	}
	for _, e := range rep.Console {
		t.Errorf("console: %s", e)
	}
	for _, u := range rep.Requests {
		if u != "file://"+page {
			t.Errorf("the page requested %s; a report must not load anything", u)
		}
	}
	if len(rep.Requests) == 0 {
		t.Error("saw no request for the page itself; is the network log working?")
	}
	charts := 0
	for _, ch := range rep.Charts {
		charts++
		if !(ch.Width > 0 && ch.Height > 0) {
			t.Errorf("chart %s has size %v×%v", ch.ID, ch.Width, ch.Height)
		}
	}
	files, _ := filepath.Glob(filepath.Join(dir, ChartsDir, "*.svg"))
	if charts != len(files) || charts == 0 {
		t.Errorf("page shows %d charts, the charts folder holds %d", charts, len(files))
	}

	shot := filepath.Join(t.TempDir(), "report.png")
	if keep := os.Getenv("SWEEPSTAT_REPORT_KEEP"); keep != "" {
		if err := os.MkdirAll(filepath.Join(keep, ChartsDir), 0o755); err != nil {
			t.Fatal(err)
		}
		shot = filepath.Join(keep, "report.png")
		copyReportFiles(t, dir, keep, append([]string{ReportFile}, relPaths(files, dir)...))
	}
	if err := os.WriteFile(shot, rep.PNG, 0o644); err != nil {
		t.Fatal(err)
	}
	if keep := os.Getenv("SWEEPSTAT_REPORT_KEEP"); keep != "" {
		// The page as printed on A4 (794 CSS px wide), to look at.
		c2 := startChromium(t, bin)
		pr, err := c2.loadPage(ctx, "file://"+page, 794, "print")
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(keep, "report-print.png"), pr.PNG, 0o644); err != nil {
			t.Fatal(err)
		}
	}
	if len(rep.PNG) < 8 || string(rep.PNG[1:4]) != "PNG" {
		t.Errorf("screenshot is not a PNG (%d bytes)", len(rep.PNG))
	}
	t.Logf("screenshot: %s (%d charts)", shot, charts)
}

func relPaths(paths []string, base string) []string {
	out := make([]string, len(paths))
	for i, p := range paths {
		out[i], _ = filepath.Rel(base, p)
	}
	return out
}

func copyReportFiles(t *testing.T, from, to string, rel []string) {
	t.Helper()
	for _, r := range rel {
		b, err := os.ReadFile(filepath.Join(from, r))
		if err != nil {
			t.Fatal(err)
		}
		if err := os.WriteFile(filepath.Join(to, r), b, 0o644); err != nil {
			t.Fatal(err)
		}
	}
}
