package main

import (
	"context"
	"encoding/json"
	"flag"
	"math"
	"os"
	"os/exec"
	"path/filepath"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
)

var screenshots = flag.Bool("screenshots", false, "write testdata/screenshots/*.png from the browser test")

// chromiumPath finds Debian's Chromium; the browser test skips loudly without it (.ci/run
// installs it).
func chromiumPath() string {
	for _, p := range []string{os.Getenv("RINGSIEVE_CHROMIUM"), "/usr/bin/chromium", "/usr/bin/chromium-browser"} {
		if p != "" {
			if _, err := os.Stat(p); err == nil {
				return p
			}
		}
	}
	if p, err := exec.LookPath("chromium"); err == nil {
		return p
	}
	return ""
}

// TestBrowserPage loads the page from the built binary in headless Chromium, pastes three
// structures, screens them, checks the table order and values against the API, opens a detail
// view and checks the plot's ceiling-temperature marker against the API's ceiling_temp_k.
func TestBrowserPage(t *testing.T) {
	if testing.Short() {
		t.Skip("end-to-end")
	}
	chrome := chromiumPath()
	if chrome == "" {
		t.Skip("SKIPPING BROWSER TEST: Chromium not found (apt-get install -y chromium, or set RINGSIEVE_CHROMIUM); .ci/run installs it")
	}
	s := startService(t, filepath.Join(t.TempDir(), "browser.db"))
	// Chromium may still write to its profile while it exits: a plain temp dir, removed
	// best-effort, rather than t.TempDir (whose cleanup fails the test on a busy directory)
	profile, err := os.MkdirTemp("", "ringsieve-chromium")
	if err != nil {
		t.Fatal(err)
	}
	defer os.RemoveAll(profile)
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(chrome), chromedp.Flag("headless", true), chromedp.NoSandbox, chromedp.DisableGPU,
		chromedp.Flag("disable-quic", true), chromedp.NoFirstRun, chromedp.Flag("disable-background-networking", true),
		chromedp.Flag("disable-component-update", true), chromedp.Flag("disable-sync", true),
		chromedp.UserDataDir(profile), chromedp.WindowSize(1280, 800))
	actx, cancelA := chromedp.NewExecAllocator(context.Background(), opts...)
	defer cancelA()
	ctx, cancel := chromedp.NewContext(actx)
	defer cancel()
	ctx, cancelT := context.WithTimeout(ctx, 90*time.Second)
	defer cancelT()

	pasted := "C1=CCCC1 MEM-08\nC1=CC2CCC1C2 MEM-01\nC1=CCCCC1 MEM-12"
	var ids, verdicts, tcCells []string
	err = chromedp.Run(ctx,
		chromedp.Navigate(s.base+"/"),
		chromedp.WaitVisible("#smiles", chromedp.ByQuery),
		chromedp.SetValue("#smiles", pasted, chromedp.ByQuery),
		chromedp.SetValue("#conc", "2.0", chromedp.ByQuery),
		chromedp.Click("#go", chromedp.ByQuery),
		chromedp.WaitVisible("#ranked tbody tr:nth-child(3)", chromedp.ByQuery),
		chromedp.Evaluate(`Array.from(document.querySelectorAll('#ranked tbody tr')).map(r => r.getAttribute('data-id'))`, &ids),
		chromedp.Evaluate(`Array.from(document.querySelectorAll('#ranked tbody td.verdict')).map(c => c.getAttribute('data-verdict'))`, &verdicts),
		chromedp.Evaluate(`Array.from(document.querySelectorAll('#ranked tbody td[data-tc]')).map(c => c.getAttribute('data-tc'))`, &tcCells),
	)
	if err != nil {
		t.Fatalf("browser: %v\n%s", err, s.logs)
	}
	// the same request through the API
	body := `{"items":[{"id":"MEM-08","smiles":"C1=CCCC1"},{"id":"MEM-01","smiles":"C1=CC2CCC1C2"},{"id":"MEM-12","smiles":"C1=CCCCC1"}],"conditions":{"temperature_c":25,"monomer_conc_mol_l":2,"catalyst":"ru-nhc"}}`
	st, b, _ := call(t, "POST", s.base+"/v1/screen/batch", "application/json", strings.NewReader(body))
	if st != 200 {
		t.Fatalf("batch: %d %s", st, b)
	}
	var api struct {
		Results []struct {
			ID      string `json:"id"`
			Verdict string `json:"verdict"`
			Thermo  struct {
				CeilingTempK *float64 `json:"ceiling_temp_k"`
			} `json:"thermo"`
		} `json:"results"`
	}
	json.Unmarshal(b, &api)
	for i, r := range api.Results {
		if i >= len(ids) || ids[i] != r.ID || verdicts[i] != r.Verdict {
			t.Fatalf("table order %v %v, API %+v", ids, verdicts, api.Results)
		}
		if r.Thermo.CeilingTempK != nil {
			got, _ := strconv.ParseFloat(tcCells[i], 64)
			if math.Abs(got-*r.Thermo.CeilingTempK) > 1e-6 {
				t.Errorf("%s: table T_c %v, API %v", r.ID, tcCells[i], *r.Thermo.CeilingTempK)
			}
		}
	}
	if *screenshots {
		var png []byte
		if err := chromedp.Run(ctx, chromedp.FullScreenshot(&png, 100)); err == nil {
			os.MkdirAll("testdata/screenshots", 0o755)
			os.WriteFile("testdata/screenshots/ranked-table.png", png, 0o644)
		}
	}
	// every row shows a drawing of its structure (GET /v1/depict, inline SVG)
	var drawn int
	err = chromedp.Run(ctx,
		chromedp.Poll(`document.querySelectorAll('#ranked tbody td.structure svg').length === 3`, nil, chromedp.WithPollingTimeout(20*time.Second)),
		chromedp.Evaluate(`document.querySelectorAll('#ranked tbody td.structure svg line').length`, &drawn),
	)
	if err != nil || drawn < 3*5 {
		t.Fatalf("drawings in the table: %v (%d bond lines)", err, drawn)
	}
	// detail view of the second row (cyclopentene, whose ceiling lies in the working window):
	// a large drawing with the opening ring olefin highlighted, and the plots' T_c marker in °C
	// equal to the API value
	var marker string
	var markers, highlighted int
	err = chromedp.Run(ctx,
		chromedp.Click(`#ranked tbody tr:nth-child(2) .id-link`, chromedp.ByQuery),
		chromedp.WaitVisible(`#plot-dg [data-role="tc-marker"]`, chromedp.ByQuery),
		chromedp.AttributeValue(`#plot-dg [data-role="tc-marker"]`, "data-value", &marker, nil, chromedp.ByQuery),
		chromedp.Evaluate(`document.querySelectorAll('#plots svg [data-role="tc-marker"]').length`, &markers),
		chromedp.Poll(`document.querySelectorAll('#detail-drawing svg').length === 1`, nil, chromedp.WithPollingTimeout(20*time.Second)),
		chromedp.Evaluate(`document.querySelectorAll('#detail-drawing svg g[stroke="#f2c94c"] line').length`, &highlighted),
	)
	if err != nil {
		t.Fatalf("detail view: %v", err)
	}
	got, _ := strconv.ParseFloat(marker, 64)
	want := *api.Results[1].Thermo.CeilingTempK - 273.15
	if math.Abs(got-want) > 1e-6 {
		t.Errorf("plot T_c marker %v °C, API ceiling_temp_k %v K", got, want+273.15)
	}
	if markers != 3 {
		t.Errorf("%d plots carry the T_c marker, want 3", markers)
	}
	if highlighted != 1 {
		t.Errorf("%d highlighted bonds in the detail drawing, want the one ring olefin", highlighted)
	}
	if *screenshots {
		var png []byte
		if err := chromedp.Run(ctx, chromedp.ScrollIntoView("#detail", chromedp.ByQuery), chromedp.Screenshot("#detail", &png, chromedp.ByQuery)); err == nil {
			os.WriteFile("testdata/screenshots/detail-view.png", png, 0o644)
		}
	}
	// file upload: the demo list goes through an asynchronous job and fills the table
	demo, _ := filepath.Abs("testdata/demo/membrane_candidates.csv")
	var rows int
	err = chromedp.Run(ctx,
		chromedp.Click("#close-detail", chromedp.ByQuery),
		chromedp.Evaluate(`document.getElementById('smiles').value = ''`, nil),
		chromedp.SetUploadFiles("#file", []string{demo}, chromedp.ByQuery),
		chromedp.Click("#go", chromedp.ByQuery),
		chromedp.WaitVisible("#ranked tbody tr:nth-child(15)", chromedp.ByQuery),
		chromedp.Evaluate(`document.querySelectorAll('#ranked tbody tr').length`, &rows),
	)
	if err != nil || rows != 15 {
		t.Errorf("upload of the demo list: %d rows, %v", rows, err)
	}
	// the API reference page renders the OpenAPI document
	var ops []string
	err = chromedp.Run(ctx,
		chromedp.Navigate(s.base+"/docs"),
		chromedp.WaitVisible("#ops section.op", chromedp.ByQuery),
		chromedp.Evaluate(`Array.from(document.querySelectorAll('#ops section.op h2')).map(h => h.textContent)`, &ops),
	)
	joined := strings.Join(ops, "\n")
	for _, want := range []string{"POST /v1/screen", "POST /v1/plan", "GET /v1/jobs/{id}/results", "POST /v1/monomers"} {
		if err != nil || !strings.Contains(joined, want) {
			t.Errorf("API reference page lacks %q (%v)", want, err)
		}
	}
	chromedp.Run(ctx, chromedp.Navigate(s.base+"/"), chromedp.WaitVisible("#smiles", chromedp.ByQuery))
	// narrow window: the page still lays out (no horizontal overflow of the form)
	var overflow bool
	err = chromedp.Run(ctx, chromedp.EmulateViewport(420, 800), chromedp.Evaluate(`document.querySelector('#screen-form').scrollWidth > window.innerWidth + 2`, &overflow))
	if err != nil || overflow {
		t.Errorf("narrow window: overflow %v, %v", overflow, err)
	}
}
