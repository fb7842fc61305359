package api_test

import (
	"context"
	"net/http"
	"net/http/httptest"
	"os"
	"os/exec"
	"strconv"
	"strings"
	"testing"
	"time"

	"github.com/chromedp/chromedp"
	"github.com/stretchr/testify/require"

	"lipidsvc/api"
)

// browserPath finds headless Chromium. Without one the browser tests are
// skipped, unless LIPIDSVC_BROWSER_TEST=required (as .ci/run sets it,
// after installing Debian's chromium), when they fail.
func browserPath(t *testing.T) string {
	t.Helper()
	for _, name := range []string{"chromium", "chromium-browser", "google-chrome", "headless-shell"} {
		if p, err := exec.LookPath(name); err == nil {
			return p
		}
	}
	if os.Getenv("LIPIDSVC_BROWSER_TEST") == "required" {
		t.Fatal("LIPIDSVC_BROWSER_TEST=required but no chromium is installed")
	}
	t.Skip("no chromium; install Debian's chromium to run the browser test")
	return ""
}

// browser starts headless Chromium against a real server of the app.
func browser(t *testing.T) (context.Context, string) {
	t.Helper()
	exe := browserPath(t)
	srv := httptest.NewServer(newApp(t).Echo)
	t.Cleanup(srv.Close)
	opts := append(chromedp.DefaultExecAllocatorOptions[:],
		chromedp.ExecPath(exe),
		chromedp.NoSandbox, // root in a container has no user namespace for the sandbox
		chromedp.Flag("disable-gpu", true),
		chromedp.Flag("disable-dev-shm-usage", true),
		chromedp.WindowSize(1400, 1000),
	)
	actx, cancelAlloc := chromedp.NewExecAllocator(context.Background(), opts...)
	t.Cleanup(cancelAlloc)
	ctx, cancel := chromedp.NewContext(actx)
	t.Cleanup(cancel)
	ctx, cancelT := context.WithTimeout(ctx, 45*time.Second)
	t.Cleanup(cancelT)
	return ctx, srv.URL
}

// text runs a text query.
func text(t *testing.T, ctx context.Context, a chromedp.Action[string]) string {
	t.Helper()
	v, err := chromedp.Run(ctx, a)
	require.NoError(t, err)
	return v
}

// count is the number of elements a CSS selector matches.
func count(t *testing.T, ctx context.Context, css string) int {
	t.Helper()
	n, err := chromedp.Run(ctx, chromedp.Evaluate[int](`document.querySelectorAll(`+strconv.Quote(css)+`).length`))
	require.NoError(t, err)
	return n
}

// plotPaths is the number of SVG paths of a drawn plot image, 0 while it
// is not drawn.
func plotPaths(t *testing.T, ctx context.Context, css string) int {
	t.Helper()
	js := `(() => { const img = document.querySelector(` + strconv.Quote(css) + `);
	  if (!img || !img.complete || img.naturalWidth === 0) return 0;
	  const svg = decodeURIComponent(img.src.slice(img.src.indexOf(",") + 1));
	  return new DOMParser().parseFromString(svg, "image/svg+xml").querySelectorAll("path").length; })()`
	_, err := chromedp.Run(ctx, chromedp.Poll[bool](`(`+js+`) > 0`))
	require.NoError(t, err)
	n, err := chromedp.Run(ctx, chromedp.Evaluate[int](js))
	require.NoError(t, err)
	return n
}

// The try-it page in a real browser: load it, put the demo profile in,
// press Calculate, and see the iodine value the API computes and a drawn
// solid fat curve and hardening path.
func TestTryItPageInBrowser(t *testing.T) {
	ctx, url := browser(t)
	require.NoError(t, chromedp.Do(ctx,
		chromedp.Navigate(url+"/"),
		chromedp.WaitVisible(chromedp.ID("calc")),
		chromedp.WaitReady(chromedp.CSS(`#catalyst option[value="nickel_non_selective"]`)),
	))
	presets := count(t, ctx, "#catalyst option")
	require.NoError(t, chromedp.Do(ctx,
		chromedp.Click(chromedp.ID("demo")),
		chromedp.Click(chromedp.ID("calc")),
		chromedp.WaitVisible(chromedp.ID("iv-value")),
		chromedp.WaitVisible(chromedp.CSS("#sfc-plot img")),
		chromedp.WaitVisible(chromedp.CSS("#path-plot img")),
		chromedp.WaitVisible(chromedp.ID("forecast-iv")),
	))
	iv := text(t, ctx, chromedp.Text(chromedp.ID("iv-value")))
	forecastIV := text(t, ctx, chromedp.Text(chromedp.ID("forecast-iv")))
	curl := text(t, ctx, chromedp.Text(chromedp.ID("curl")))
	sfcPaths := plotPaths(t, ctx, "#sfc-plot img")
	pathPaths := plotPaths(t, ctx, "#path-plot img")
	require.Greater(t, presets, 2, "the catalyst presets came from the API")

	// The page shows what the API answers for the demo profile.
	rec := do(t, newApp(t), call{method: http.MethodPost, path: "/v1/properties", body: readFile(t, "testdata", "demo/properties-request.json")})
	want := decode[api.PropertiesResponse](t, rec).IodineValue
	got, err := strconv.ParseFloat(strings.TrimSpace(iv), 64)
	require.NoError(t, err, iv)
	require.InDelta(t, want, got, 0.005)
	require.Equal(t, "70.0", strings.TrimSpace(forecastIV))
	require.Greater(t, sfcPaths, 10, "a drawn solid fat curve")
	require.Greater(t, pathPaths, 10, "a drawn hardening path")
	require.Contains(t, curl, "curl -s "+url+"/v1/properties")
	require.Contains(t, curl, `"C18:2n6c"`)
}

// A CSV header and row pasted in are read, and a bad label is shown with
// the API's suggestion.
func TestTryItPageCSVAndErrors(t *testing.T) {
	ctx, url := browser(t)
	csvRow := "sample_id;C16:0;C18:0;C18:1n9c;C18:2n6c;C18:3n3\nNB-1;10,5;4;23,5;54,3;7,7"
	require.NoError(t, chromedp.Do(ctx,
		chromedp.Navigate(url+"/"),
		chromedp.WaitVisible(chromedp.ID("calc")),
		chromedp.SetValue(chromedp.ID("profile"), csvRow),
		chromedp.Click(chromedp.ID("calc")),
		chromedp.WaitVisible(chromedp.ID("iv-value")),
	))
	iv := text(t, ctx, chromedp.Text(chromedp.ID("iv-value")))
	require.NoError(t, chromedp.Do(ctx,
		chromedp.SetValue(chromedp.ID("profile"), "C16:0; 10\nC18:7; 90"),
		chromedp.Click(chromedp.ID("calc")),
		chromedp.WaitVisible(chromedp.CSS("#errors .err")),
	))
	errText := text(t, ctx, chromedp.Text(chromedp.ID("errors")))
	got, err := strconv.ParseFloat(strings.TrimSpace(iv), 64)
	require.NoError(t, err)
	require.Greater(t, got, 120.0)
	require.Contains(t, errText, "/profile/acids/1/acid")
	require.Contains(t, errText, "did you mean")
}

// The documentation page renders every operation of the contract and
// sends a request from it.
func TestDocsPageInBrowser(t *testing.T) {
	ctx, url := browser(t)
	require.NoError(t, chromedp.Do(ctx,
		chromedp.Navigate(url+"/docs"),
		chromedp.WaitVisible(chromedp.ID("computeProperties")),
	))
	ops := count(t, ctx, "details")
	require.NoError(t, chromedp.Do(ctx,
		chromedp.Click(chromedp.CSS("#computeProperties summary")),
		chromedp.Click(chromedp.CSS("#computeProperties button")),
		chromedp.WaitVisible(chromedp.CSS("#computeProperties pre")),
	))
	_, err := chromedp.Run(ctx, chromedp.Poll[bool](`document.querySelector("#computeProperties pre").textContent.startsWith("200")`))
	require.NoError(t, err)
	answer := text(t, ctx, chromedp.Text(chromedp.CSS("#computeProperties pre")))
	_, doc := loadSpec(t)
	n := 0
	for _, item := range doc.Paths.Map() {
		n += len(item.Operations())
	}
	require.Equal(t, n, ops)
	require.Contains(t, answer, `"iodine_value"`)
}
