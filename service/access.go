package service

import (
	"bufio"
	"bytes"
	"crypto/sha256"
	"crypto/subtle"
	"encoding/hex"
	"fmt"
	"os"
	"strings"

	"github.com/labstack/echo/v4"

	"lipidsvc/api"
)

// APIKey is one named client key, kept only as the SHA-256 of the key.
type APIKey struct {
	Name    string
	Hash    [sha256.Size]byte
	Revoked bool
}

// An API keys file (LIPIDSVC_API_KEYS_FILE) has one key per line: the
// client's name, the lower-case hex SHA-256 of its key, and optionally the
// word "revoked"; blank lines and lines starting with # are ignored. The
// keys themselves never reach the service's disk or logs:
//
//	# name            sha256 of the key (printf %s "$KEY" | sha256sum)
//	northbay-lims     9f86d081884c7d659a2feaa0c55ad015a3bf4f1b2b0b822cd15d6c15b0f00a08
//	old-erp-bridge    60303ae22b998861bce3b28f33eec1be758a213c86c93c076dbe9f558c11c752 revoked

// readAPIKeys reads a keys file; a bad line stops start-up naming it.
func readAPIKeys(path string) ([]APIKey, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("LIPIDSVC_API_KEYS_FILE: %w", err)
	}
	var keys []APIKey
	names := map[string]int{}
	sc := bufio.NewScanner(bytes.NewReader(data))
	for line := 1; sc.Scan(); line++ {
		f := strings.Fields(sc.Text())
		if len(f) == 0 || strings.HasPrefix(f[0], "#") {
			continue
		}
		at := fmt.Sprintf("LIPIDSVC_API_KEYS_FILE %s, line %d", path, line)
		if len(f) < 2 || len(f) > 3 || (len(f) == 3 && f[2] != "revoked") {
			return nil, fmt.Errorf("%s: want \"name sha256-hex [revoked]\"", at)
		}
		h, err := hex.DecodeString(f[1])
		if err != nil || len(h) != sha256.Size {
			return nil, fmt.Errorf("%s: %q is not a SHA-256 in hex (64 hex digits)", at, f[1])
		}
		if prev, dup := names[f[0]]; dup {
			return nil, fmt.Errorf("%s: the name %q is also on line %d", at, f[0], prev)
		}
		names[f[0]] = line
		k := APIKey{Name: f[0], Revoked: len(f) == 3}
		copy(k.Hash[:], h)
		keys = append(keys, k)
	}
	if len(keys) == 0 {
		return nil, fmt.Errorf("LIPIDSVC_API_KEYS_FILE %s: no keys (leave the variable unset to run without keys)", path)
	}
	return keys, nil
}

// ContextKeyClient is where authentication leaves the client's key name.
const ContextKeyClient = "lipidsvc.client"

// publicRoutes answer without a key: the probes, the contract and the two
// pages (which then send the key the user enters with their API calls).
var publicRoutes = map[string]bool{"/healthz": true, "/readyz": true, "/openapi.yaml": true, "/openapi.json": true, "/": true, "/docs": true}

// authenticate admits a request with a valid key (Authorization: Bearer
// <key>, or X-API-Key: <key>) and refuses the rest with 401. The key's
// hash is compared with every stored hash in constant time, without
// stopping at a match, so the time taken says nothing about the keys. With
// no keys configured every request passes as "anonymous".
func authenticate(keys []APIKey, m *Metrics) echo.MiddlewareFunc {
	anonymous := m.clients.WithLabelValues("anonymous")
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			req := c.Request()
			if len(keys) == 0 {
				c.Set(ContextKeyClient, "anonymous")
				anonymous.Inc()
				return next(c)
			}
			if publicRoutes[c.Path()] || req.Method == "OPTIONS" {
				return next(c)
			}
			key := req.Header.Get("X-API-Key")
			if a := req.Header.Get(echo.HeaderAuthorization); key == "" && len(a) > 7 && strings.EqualFold(a[:7], "bearer ") {
				key = strings.TrimSpace(a[7:])
			}
			if key == "" {
				m.clients.WithLabelValues("unauthenticated").Inc()
				return api.NewError(api.KindUnauthorized, "this service requires an API key: send it as Authorization: Bearer <key> or X-API-Key: <key>")
			}
			h := sha256.Sum256([]byte(key))
			found := -1
			for i := range keys {
				if subtle.ConstantTimeCompare(h[:], keys[i].Hash[:]) == 1 {
					found = i
				}
			}
			if found < 0 || keys[found].Revoked {
				m.clients.WithLabelValues("unauthenticated").Inc()
				return api.NewError(api.KindUnauthorized, "the API key is not valid or has been revoked")
			}
			name := keys[found].Name
			c.Set(ContextKeyClient, name)
			m.clients.WithLabelValues(name).Inc()
			return next(c)
		}
	}
}

// securityHeaders sets the headers every answer carries; a handler may
// replace them (the pages set their own Content-Security-Policy). The
// values are shared, read-only slices under canonical keys: nothing is
// allocated per request.
func securityHeaders() echo.MiddlewareFunc {
	headers := map[string][]string{
		"X-Content-Type-Options":  {"nosniff"},
		"X-Frame-Options":         {"DENY"},
		"Referrer-Policy":         {"no-referrer"},
		"Content-Security-Policy": {"default-src 'none'; frame-ancestors 'none'"},
		"Cache-Control":           {"no-store"},
	}
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			h := c.Response().Header()
			for k, v := range headers {
				h[k] = v
			}
			return next(c)
		}
	}
}
