package main

import (
	"bytes"
	"context"
	"fmt"
	"image/png"
	"os"
	"os/exec"
	"path/filepath"
	"regexp"
	"strconv"
	"strings"
	"testing"
	"time"
)

const chromiumPath = "/usr/bin/chromium"

// chromium runs the headless browser once on page with extra flags and
// returns its standard output and standard error. The page must work
// offline: every host name fails to resolve.
func chromium(t *testing.T, profile, page string, extra ...string) (string, string) {
	t.Helper()
	ctx, cancel := context.WithTimeout(context.Background(), 2*time.Minute)
	defer cancel()
	args := []string{"--headless", "--no-sandbox", "--disable-gpu", "--disable-background-networking",
		"--disable-component-update", "--disable-sync", "--no-first-run", "--hide-scrollbars",
		"--host-resolver-rules=MAP * ~NOTFOUND", "--user-data-dir=" + profile,
		"--virtual-time-budget=5000", "--enable-logging=stderr", "--v=0"}
	args = append(append(args, extra...), "file://"+page)
	cmd := exec.CommandContext(ctx, chromiumPath, args...)
	var out, errb bytes.Buffer
	cmd.Stdout, cmd.Stderr = &out, &errb
	if err := cmd.Run(); err != nil {
		t.Fatalf("chromium %s: %v\n%s", strings.Join(extra, " "), err, tail(errb.String(), 2000))
	}
	return out.String(), errb.String()
}

func tail(s string, n int) string {
	if len(s) > n {
		return s[len(s)-n:]
	}
	return s
}

var (
	chartDiv   = regexp.MustCompile(`<div class="chart" id="(chart-\d+)"`)
	errorsBox  = regexp.MustCompile(`(?s)<div id="js-errors"[^>]*>(.*?)</div>`)
	scriptBody = regexp.MustCompile(`(?s)(<script[^>]*>).*?</script>`)
	loadsFile  = regexp.MustCompile(`(?i)<(script|link|img|iframe|object|embed)\b[^>]*\b(src|href|data)=`)
)

// browserExample runs the example plan into a temporary folder for a
// test in the browser: the folder, the output folder and report.html's
// absolute path. The test is skipped in -short mode or without Chromium.
func browserExample(t *testing.T) (dir, out, page string) {
	t.Helper()
	if testing.Short() {
		t.Skip("browser test skipped in -short mode")
	}
	if _, err := os.Stat(chromiumPath); err != nil {
		t.Skipf("browser test skipped: %s is not installed (Debian: apt-get install -y chromium)", chromiumPath)
	}
	dir = t.TempDir()
	out = filepath.Join(dir, "out")
	stdout, stderr, code := runCLI("run", filepath.Join("..", "..", "plans", "example.yaml"), "--out", out, "--quiet")
	if code != 0 {
		t.Fatalf("ordplan run: exit %d\n%s%s", code, stdout, stderr)
	}
	page, err := filepath.Abs(filepath.Join(out, "report.html"))
	if err != nil {
		t.Fatal(err)
	}
	return dir, out, page
}

// TestReportRendersInBrowser runs the example plan and opens report.html
// in headless Chromium without a network: every chart must be drawn (its
// element marked data-rendered="1" and holding a canvas) and the page
// must report no script error. Every chart has its export buttons (PNG
// and SVG), the predicted probabilities have interval bands, and every
// figure report.md shows exists beside it.
func TestReportRendersInBrowser(t *testing.T) {
	dir, out, page := browserExample(t)
	src, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	// Offline: no element loads a file (script bodies, which may hold such
	// text in strings, are left out of the search).
	if m := loadsFile.Find(scriptBody.ReplaceAll(src, []byte("$1</script>"))); m != nil {
		t.Errorf("report.html loads a file: %s", m)
	}
	var ids []string
	for _, m := range chartDiv.FindAllSubmatch(src, -1) {
		ids = append(ids, string(m[1]))
	}
	// At least the criteria chart, one predictor across boundaries and the
	// predictions.
	if len(ids) < 3 {
		t.Fatalf("report.html has %d charts %v, want at least 3", len(ids), ids)
	}

	// One browser run both prints the DOM after the scripts ran and takes
	// a screenshot of the top of the page.
	shot := filepath.Join(dir, "report.png")
	dom, logs := chromium(t, filepath.Join(dir, "profile"), page, "--dump-dom", "--screenshot="+shot, "--window-size=1280,4000")
	for _, id := range ids {
		start := strings.Index(dom, `id="`+id+`"`)
		if start < 0 {
			t.Errorf("%s: not in the rendered page", id)
			continue
		}
		end := strings.Index(dom[start:], "</figure>")
		if end < 0 {
			t.Errorf("%s: no end of its figure", id)
			continue
		}
		el := dom[start : start+end]
		tag := el[:strings.Index(el, ">")]
		if !strings.Contains(tag, `data-rendered="1"`) {
			t.Errorf("%s: not marked as drawn: <div %s>", id, tag)
		}
		if !strings.Contains(el, "<canvas") {
			t.Errorf("%s: no canvas inside", id)
		}
		for _, kind := range []string{"png", "svg"} {
			if !strings.Contains(el, `data-export="`+kind+`" data-chart="`+id+`"`) {
				t.Errorf("%s: no %s export button", id, kind)
			}
		}
	}
	// The predicted-probability chart draws its intervals as bands: a
	// filled series stacked on the lower bound.
	if !bytes.Contains(src, []byte(`"stack":"band-1"`)) || !bytes.Contains(src, []byte(`"areaStyle"`)) {
		t.Error("report.html: no interval band on the predicted-probability chart")
	}
	// report.md shows the same charts as image files beside it.
	md, err := os.ReadFile(filepath.Join(out, "report.md"))
	if err != nil {
		t.Fatal(err)
	}
	figs := regexp.MustCompile(`!\[[^\]]*\]\(([^)]+)\)`).FindAllSubmatch(md, -1)
	if len(figs) != len(ids) {
		t.Errorf("report.md shows %d figures, report.html %d charts", len(figs), len(ids))
	}
	for _, m := range figs {
		if _, err := os.Stat(filepath.Join(out, string(m[1]))); err != nil {
			t.Errorf("report.md: figure %s: %v", m[1], err)
		}
	}
	m := errorsBox.FindStringSubmatch(dom)
	if m == nil {
		t.Error("no #js-errors box in the rendered page")
	} else if strings.TrimSpace(m[1]) != "" {
		t.Errorf("script errors on the page:\n%s", m[1])
	}
	for _, line := range strings.Split(logs, "\n") {
		if strings.Contains(line, ":CONSOLE") {
			t.Errorf("browser console: %s", line)
		}
	}

	// The export buttons work: a copy of the page exports the first chart
	// as SVG and as PNG, the downloads caught into the page.
	probe := string(src)
	i := strings.LastIndex(probe, "</body>")
	probe = probe[:i] + `<script>ordplanSave=function(u,n){var p=document.createElement("pre");p.className="exported";p.textContent=n+" "+u.slice(0,30);document.body.appendChild(p);};` +
		`ordplanExport("` + ids[0] + `","svg");ordplanExport("` + ids[0] + `","png");</script>` + probe[i:]
	probePage := filepath.Join(dir, "export.html")
	if err := os.WriteFile(probePage, []byte(probe), 0o644); err != nil {
		t.Fatal(err)
	}
	pdom, _ := chromium(t, filepath.Join(dir, "profile2"), probePage, "--dump-dom")
	for _, want := range []string{ids[0] + ".svg data:image/svg+xml", ids[0] + ".png data:image/png"} {
		if !strings.Contains(pdom, want) {
			t.Errorf("export: no %q in the page after exporting", want)
		}
	}
	if m := errorsBox.FindStringSubmatch(pdom); m != nil && strings.TrimSpace(m[1]) != "" {
		t.Errorf("export: script errors:\n%s", m[1])
	}

	f, err := os.Open(shot)
	if err != nil {
		t.Fatal(err)
	}
	defer f.Close()
	img, err := png.Decode(f)
	if err != nil {
		t.Fatalf("screenshot: %v", err)
	}
	if b := img.Bounds(); b.Dx() != 1280 || b.Dy() != 4000 {
		t.Errorf("screenshot is %dx%d, want 1280x4000", b.Dx(), b.Dy())
	}
	if keep := os.Getenv("ORDPLAN_SCREENSHOT_DIR"); keep != "" {
		b, _ := os.ReadFile(shot)
		if err := os.WriteFile(filepath.Join(keep, "report.png"), b, 0o644); err != nil {
			t.Error(err)
		}
	}
}

// TestReportAtPhoneWidth opens the example's report.html in headless
// Chromium 400 pixels wide, as a phone shows it (the page is dumped at
// headless Chromium's least window width, 500, whatever smaller is
// asked): every chart is drawn, a chart whose layout changes below its
// width takes the narrow height of the narrowest step it is narrower than
// (data-narrow, which keeps its plot's size), the others keep theirs, and
// a table wider than the screen is marked as scrolling sideways (the note
// above it and the faded edge), while a narrow table is not; at 1400
// pixels no chart takes a narrow height, a chart alone in its row whose
// title or legend takes fewer lines there (the calibration chart) takes
// the height of the widest step it is as wide as (data-wide), and no
// table of the models is marked.
// The calibration chart's tooltip names each series whole.
func TestReportAtPhoneWidth(t *testing.T) {
	dir, _, page := browserExample(t)
	chartTag := regexp.MustCompile(`<div class="chart" id="(chart-\d+)" style="height: ?(\d+)px[^"]*"( data-narrow="([\d: ]+)")?( data-wide="([\d: ]+)")?[^>]*><div style="position: relative; width: (\d+)px`)
	wraps := regexp.MustCompile(`<div class="table-wrap( [^"]*)?">`)
	for _, width := range []int{400, 1400} {
		dom, _ := chromium(t, filepath.Join(dir, fmt.Sprint("profile", width)), page, "--dump-dom", fmt.Sprintf("--window-size=%d,3000", width))
		if m := errorsBox.FindStringSubmatch(dom); m == nil || strings.TrimSpace(m[1]) != "" {
			t.Errorf("%d px: script errors: %v", width, m)
		}
		charts, narrowed, widened := 0, 0, 0
		for _, m := range chartTag.FindAllStringSubmatch(dom, -1) {
			charts++
			tag := m[0]
			if !strings.Contains(tag, `data-rendered="1"`) {
				t.Errorf("%d px: %s not drawn", width, m[1])
			}
			if m[4] == "" && m[6] == "" {
				continue
			}
			// data-narrow: "WIDTH:HEIGHT ..." from the widest; the chart
			// takes the height of the narrowest step wider than it is (the
			// library's canvas box gives its width), its usual one if none;
			// data-wide, from the narrowest: the height of the widest step
			// it is as wide as.
			chartWidth, _ := strconv.Atoi(m[7])
			want, wide, narrows := "", false, map[string]bool{}
			for _, st := range strings.Fields(m[4]) {
				w, h, _ := strings.Cut(st, ":")
				narrows[h] = true
				if n, _ := strconv.Atoi(w); chartWidth < n {
					want = h
				}
			}
			for _, st := range strings.Fields(m[6]) {
				w, h, _ := strings.Cut(st, ":")
				narrows[h] = true
				if n, _ := strconv.Atoi(w); chartWidth >= n {
					want, wide = h, true
				}
			}
			if want != "" {
				if wide {
					widened++
				} else {
					narrowed++
				}
				if m[2] != want {
					t.Errorf("%d px: %s is %d px wide and %s px high, want its height %s (narrower %q, wider %q)", width, m[1], chartWidth, m[2], want, m[4], m[6])
				}
			} else if narrows[m[2]] {
				t.Errorf("%d px: %s is %d px wide and took another width's height (narrower %q, wider %q)", width, m[1], chartWidth, m[4], m[6])
			}
		}
		if charts < 3 || (width == 400 && (narrowed == 0 || widened != 0)) || (width == 1400 && (narrowed != 0 || widened == 0)) {
			t.Errorf("%d px: %d charts, %d at a narrow height, %d at a wide one", width, charts, narrowed, widened)
		}
		marked, all := 0, 0
		for _, m := range wraps.FindAllStringSubmatch(dom, -1) {
			all++
			if strings.Contains(m[1], "scrolls") {
				marked++
			}
		}
		// The table of the models' fit has nine columns: it scrolls at 400
		// pixels and not at 1400; the tables of two or three columns
		// (the data dictionary's) scroll at neither.
		fit := strings.Index(dom, "Overall fit: each candidate")
		if fit < 0 {
			t.Fatalf("%d px: no table of overall fit", width)
		}
		m := wraps.FindStringSubmatch(dom[fit:])
		if m == nil {
			t.Fatalf("%d px: no box after the overall fit's caption", width)
		}
		if got := strings.Contains(m[1], "scrolls"); got != (width == 400) {
			t.Errorf("%d px: the table of overall fit marked scrolling: %v", width, got)
		}
		if width == 400 && (marked == 0 || marked == all) {
			t.Errorf("%d px: %d of %d tables marked scrolling, want some, not all", width, marked, all)
		}
		if width == 1400 && marked == all {
			t.Errorf("%d px: every table marked scrolling", width)
		}
	}

	// The calibration chart's axis tooltip names each series whole
	// (category and mark), though a category's line and points share its
	// name in the legend: a copy of the page shows the tooltip at group 3
	// and copies it into the page.
	src, err := os.ReadFile(page)
	if err != nil {
		t.Fatal(err)
	}
	i := bytes.Index(src, []byte("Observed and expected by group of predicted score"))
	m := regexp.MustCompile(`ordplanDraw\("(chart-\d+)"`).FindAllSubmatch(src[:max(i, 0)], -1)
	if i < 0 || len(m) == 0 {
		t.Fatal("no calibration chart")
	}
	id := string(m[len(m)-1][1])
	probe := string(src)
	end := strings.LastIndex(probe, "</body>")
	probe = probe[:end] + `<script>setTimeout(function(){ordplanCharts["` + id + `"].chart.dispatchAction({type:"showTip",seriesIndex:0,dataIndex:2});},300);` +
		`setTimeout(function(){var p=document.createElement("pre");p.className="tip";var d=document.getElementById("` + id + `").querySelectorAll("div");for(var i=0;i<d.length;i++){if(d[i].innerHTML.indexOf("<br>")>=0){p.textContent=d[i].textContent;}}document.body.appendChild(p);},1500);</script>` + probe[end:]
	probePage := filepath.Join(dir, "tooltip.html")
	if err := os.WriteFile(probePage, []byte(probe), 0o644); err != nil {
		t.Fatal(err)
	}
	dom, _ := chromium(t, filepath.Join(dir, "profile3"), probePage, "--dump-dom", "--window-size=1400,3000")
	tip := regexp.MustCompile(`<pre class="tip">([^<]*)</pre>`).FindStringSubmatch(dom)
	if tip == nil || !strings.HasPrefix(tip[1], "3") || !strings.Contains(tip[1], "very_unsafe expected 0.") || !strings.Contains(tip[1], "very_safe observed 0.") {
		t.Errorf("calibration tooltip at group 3: %q, want each series named with its category and mark", tip)
	}
}
