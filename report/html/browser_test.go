package html_test

import (
	"bytes"
	"context"
	"encoding/json"
	"flag"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"

	"canalstep/report/units"
	"canalstep/testdata/reftool"
)

var keepShot = flag.String("screenshot", "", "copy the browser test's screenshot to this file")

// chromium runs Debian's headless Chromium on the file at path with the
// extra arguments, its own profile folder and a network log, and returns
// its standard output and error and the path of the network log. The flags
// keep Chromium from syncing, updating components and fetching in the
// background, so that what the log records is the page's doing.
func chromium(t *testing.T, bin, path string, extra ...string) (stdout, stderr []byte, netlog string) {
	t.Helper()
	dir := t.TempDir()
	netlog = filepath.Join(dir, "net.json")
	args := append([]string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
		"--disable-component-update", "--disable-sync", "--no-first-run", "--user-data-dir=" + filepath.Join(dir, "profile"),
		"--enable-logging=stderr", "--v=0", "--log-net-log=" + netlog}, extra...)
	ctx, cancel := context.WithTimeout(context.Background(), 60*time.Second)
	defer cancel()
	cmd := exec.CommandContext(ctx, bin, append(args, "file://"+path)...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium: %v\n%s", err, errb.Bytes())
	}
	return out.Bytes(), errb.Bytes(), netlog
}

// Lines of Chromium's log that concern the page. Every console message
// does (":CONSOLE"): the report has no script, so any is a script error
// ("Uncaught ..."), a Content-Security-Policy report of a blocked load or
// a failed load. Other lines count when they name the page's URL and say
// a load failed or was refused. Chromium's own noise on a headless machine
// (no D-Bus, no GPU, sandbox and VA-API warnings, and errors of its own
// background requests, which name no page) is ignored.
var (
	consoleLine = regexp.MustCompile(`:CONSOLE[:(]|Uncaught`)
	loadTrouble = regexp.MustCompile(`net::ERR_|Refused to (load|execute|apply|connect)|Failed to load resource|violates the following Content Security Policy`)
)

func troubleLines(stderr []byte, page string) []string {
	var out []string
	for _, l := range strings.Split(string(stderr), "\n") {
		if consoleLine.MatchString(l) || (loadTrouble.MatchString(l) && strings.Contains(l, "file://"+page)) {
			out = append(out, l)
		}
	}
	return out
}

// pageRequests returns the URLs of the network requests the page started:
// in Chromium's network log, URL_REQUEST_START_JOB events whose initiator
// is an origin (a file:// page's origin is "null"); Chromium's own requests
// carry the initiator "not an origin".
func pageRequests(t *testing.T, netlog string) []string {
	t.Helper()
	b, err := os.ReadFile(netlog)
	if err != nil {
		t.Fatalf("network log: %v", err)
	}
	var log struct {
		Constants struct {
			LogEventTypes map[string]int `json:"logEventTypes"`
		} `json:"constants"`
		Events []struct {
			Type   int `json:"type"`
			Params struct {
				URL       string `json:"url"`
				Initiator string `json:"initiator"`
			} `json:"params"`
		} `json:"events"`
	}
	if err := json.Unmarshal(b, &log); err != nil {
		t.Fatalf("network log: %v", err)
	}
	start, ok := log.Constants.LogEventTypes["URL_REQUEST_START_JOB"]
	if !ok {
		t.Fatal("network log has no URL_REQUEST_START_JOB event type")
	}
	var out []string
	for _, e := range log.Events {
		if e.Type == start && e.Params.Initiator != "" && e.Params.Initiator != "not an origin" {
			out = append(out, e.Params.URL)
		}
	}
	return out
}

// TestBrowser opens the golden report in headless Chromium: the key figures
// are in the DOM Chromium builds, the page loads with no console message,
// no refused or failed load and no network request of its own, and a
// 1280-pixel-wide screenshot shows a drawn page. A control page with a
// script error and a remote image proves that the log and network checks
// see such faults.
func TestBrowser(t *testing.T) {
	bin := reftool.Need(t, "chromium")
	f, alts := goldenFixture(t)
	res := f.result
	dir := t.TempDir()
	page := filepath.Join(dir, "report.html")
	if err := os.WriteFile(page, write(t, f.report(t, units.SI, alts)), 0o644); err != nil {
		t.Fatal(err)
	}
	amount, _, against, ok := res.Saving()
	if !ok || against == nil {
		t.Fatal("the golden fixture has no saving to show")
	}
	t.Run("dom", func(t *testing.T) {
		t.Parallel()
		dom, stderr, netlog := chromium(t, bin, page, "--dump-dom")
		for _, want := range []string{
			"<span>Total cost</span><b>" + groupedInt(res.Totals.TotalCost) + "</b>",
			"<span>Drops</span><b>" + strconv.Itoa(res.Totals.DropCount) + "</b>",
			"Drop 1 at " + units.SI.Station(res.Drops[0].Chainage),
			"Saving: the plan costs " + groupedInt(amount) + " less than the by-eye baseline",
			"SAFETY AND RESPONSIBILITY NOTICE",
			"drowning hazards",
			"<svg",
		} {
			if !bytes.Contains(dom, []byte(want)) {
				t.Errorf("the DOM lacks %q", want)
			}
		}
		if bytes.Contains(bytes.ToLower(dom), []byte("<script")) {
			t.Error("the DOM has a script element")
		}
		for _, l := range troubleLines(stderr, page) {
			t.Errorf("chromium: %s", l)
		}
		for _, u := range pageRequests(t, netlog) {
			t.Errorf("the page requested %s", u)
		}
	})
	t.Run("screenshot", func(t *testing.T) {
		t.Parallel()
		shot := filepath.Join(t.TempDir(), "report.png")
		_, stderr, _ := chromium(t, bin, page, "--screenshot="+shot, "--window-size=1280,2000", "--hide-scrollbars")
		for _, l := range troubleLines(stderr, page) {
			t.Errorf("chromium: %s", l)
		}
		fh, err := os.Open(shot)
		if err != nil {
			t.Fatalf("no screenshot: %v", err)
		}
		defer fh.Close()
		img, err := png.Decode(fh)
		if err != nil {
			t.Fatalf("screenshot does not decode: %v", err)
		}
		b := img.Bounds()
		if b.Dx() != 1280 || b.Dy() != 2000 {
			t.Errorf("screenshot is %d × %d, want 1280 × 2000", b.Dx(), b.Dy())
		}
		colours := map[[3]uint32]bool{}
		ink, notice := 0, 0
		for y := b.Min.Y; y < b.Max.Y; y++ {
			for x := b.Min.X; x < b.Max.X; x++ {
				r, g, bl, _ := img.At(x, y).RGBA()
				c := [3]uint32{r >> 8, g >> 8, bl >> 8}
				colours[c] = true
				if c != [3]uint32{255, 255, 255} {
					ink++
				}
				if c == [3]uint32{0xb3, 0x26, 0x1e} { // the safety notice's border, #b3261e in the page's CSS
					notice++
				}
			}
		}
		share := float64(ink) / float64(b.Dx()*b.Dy())
		if len(colours) < 16 || share < 0.01 || share > 0.95 {
			t.Errorf("screenshot looks blank or flooded: %d colours, %.1f %% not white", len(colours), 100*share)
		}
		if notice < 1000 {
			t.Errorf("the safety notice's border is not in the first screenful (%d pixels of its colour)", notice)
		}
		t.Logf("screenshot %s: %d colours, %.1f %% not white", shot, len(colours), 100*share)
		if *keepShot != "" {
			if b, err := os.ReadFile(shot); err != nil || os.WriteFile(*keepShot, b, 0o644) != nil {
				t.Errorf("could not keep the screenshot at %s", *keepShot)
			}
		}
	})
	t.Run("control", func(t *testing.T) {
		t.Parallel()
		bad := filepath.Join(t.TempDir(), "bad.html")
		// A script error and an image from a closed local port: the checks
		// above must see both.
		body := `<!DOCTYPE html><html><head><meta charset="utf-8"/><title>control</title></head><body><p>x</p>` +
			`<script>missingFunction();</script><img src="http://127.0.0.1:9/x.png" alt=""/></body></html>`
		if err := os.WriteFile(bad, []byte(body), 0o644); err != nil {
			t.Fatal(err)
		}
		_, stderr, netlog := chromium(t, bin, bad, "--dump-dom")
		if len(troubleLines(stderr, bad)) == 0 {
			t.Errorf("the log check missed the control page's script error:\n%s", stderr)
		}
		if len(pageRequests(t, netlog)) == 0 {
			t.Error("the network check missed the control page's image request")
		}
	})
}
