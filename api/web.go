package api

import (
	"crypto/sha256"
	_ "embed"
	"encoding/base64"
	"net/http"
	"regexp"
	"strings"

	"github.com/labstack/echo/v4"
)

// The try-it page (GET /) and the API documentation (GET /docs) are single
// self-contained HTML files: inline style and script, no external assets,
// so they work on a plant network without internet access. Both call the
// service's public API from the browser, as any client would. The
// Content-Security-Policy admits exactly their inline blocks, by hash.

//go:embed web/index.html
var tryItPage []byte

//go:embed web/docs.html
var docsPage []byte

var (
	tryItCSP = pageCSP(tryItPage)
	docsCSP  = pageCSP(docsPage)
)

var inlineBlock = regexp.MustCompile(`(?s)<(script|style)>(.*?)</(?:script|style)>`)

// pageCSP is the policy for a page: its own origin only, and its inline
// script and style blocks by SHA-256.
func pageCSP(page []byte) string {
	var scripts, styles []string
	for _, m := range inlineBlock.FindAllSubmatch(page, -1) {
		sum := sha256.Sum256(m[2])
		h := "'sha256-" + base64.StdEncoding.EncodeToString(sum[:]) + "'"
		if string(m[1]) == "script" {
			scripts = append(scripts, h)
		} else {
			styles = append(styles, h)
		}
	}
	return "default-src 'none'; connect-src 'self'; img-src 'self' data:; script-src " + strings.Join(scripts, " ") +
		"; style-src " + strings.Join(styles, " ") + "; base-uri 'none'; form-action 'none'; frame-ancestors 'none'"
}

// handlePage serves one embedded page with its policy.
func handlePage(page []byte, csp string) echo.HandlerFunc {
	return func(c echo.Context) error {
		h := c.Response().Header()
		// The service's security headers are set for every answer; a
		// page replaces the policy with its own and may be cached.
		h.Set("Content-Security-Policy", csp)
		h.Set("Cache-Control", "no-cache")
		return c.HTMLBlob(http.StatusOK, page)
	}
}

// handleSpecJSON serves the contract as JSON, for the documentation page.
func handleSpecJSON(spec []byte) echo.HandlerFunc {
	return func(c echo.Context) error {
		return c.Blob(http.StatusOK, MIMEApplicationJSON, spec)
	}
}
