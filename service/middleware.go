package service

import (
	"context"
	"crypto/rand"
	"encoding/hex"
	"fmt"
	"log/slog"
	"net/http"
	"runtime/debug"
	"sync/atomic"
	"time"

	"github.com/labstack/echo/v4"

	"lipidsvc/api"
)

// HeaderRequestID carries the request id in both directions.
const HeaderRequestID = "X-Request-ID"

// requestID honours a sane incoming X-Request-ID (printable ASCII, at most
// 128 bytes) and otherwise makes one, then echoes it on the response.
func requestID() echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			id := c.Request().Header.Get(HeaderRequestID)
			if !validRequestID(id) {
				id = newRequestID()
			}
			c.Set(api.ContextKeyRequestID, id)
			c.Response().Header().Set(HeaderRequestID, id)
			return next(c)
		}
	}
}

func validRequestID(id string) bool {
	if id == "" || len(id) > 128 {
		return false
	}
	for i := 0; i < len(id); i++ {
		if id[i] < 0x21 || id[i] > 0x7e {
			return false
		}
	}
	return true
}

func newRequestID() string {
	var b [16]byte
	_, _ = rand.Read(b[:])
	return hex.EncodeToString(b[:])
}

// routeLabel is the route template for logs and metrics, never the raw
// path, so that label cardinality stays bounded.
func routeLabel(c echo.Context) string {
	p := c.Path()
	if p == "" || p == "/*" {
		return "unmatched"
	}
	return p
}

// quietRoutes are probes, logged only at debug level.
var quietRoutes = map[string]bool{"/healthz": true, "/readyz": true}

// observe writes one log line and the request metrics per request. It hands
// errors to the error handler itself, so that it sees the final status.
func observe(logger *slog.Logger, m *Metrics) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			start := time.Now()
			m.inFlight.Inc()
			defer m.inFlight.Dec()
			if err := next(c); err != nil {
				c.Error(err)
			}
			elapsed := time.Since(start)
			route := routeLabel(c)
			status := c.Response().Status
			m.observe(c.Request().Method, route, status, elapsed)
			level := slog.LevelInfo
			if quietRoutes[route] {
				level = slog.LevelDebug
			}
			logger.LogAttrs(c.Request().Context(), level, "request",
				slog.String("method", methodLabel(c.Request().Method)),
				slog.String("route", route),
				slog.Int("status", status),
				slog.Float64("duration_ms", float64(elapsed.Microseconds())/1000),
				slog.Int64("bytes_out", c.Response().Size),
				slog.String("request_id", api.RequestID(c)),
				slog.String("client", clientName(c)),
			)
			return nil
		}
	}
}

// recoverPanics turns a panic in a handler into an internal error with the
// stack in the log, so one bad request cannot take the process down.
func recoverPanics(logger *slog.Logger) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) (err error) {
			defer func() {
				if r := recover(); r != nil {
					if r == http.ErrAbortHandler {
						panic(r)
					}
					logger.Error("panic", "request_id", api.RequestID(c), "panic", fmt.Sprint(r), "stack", string(debug.Stack()))
					err = &api.Error{Kind: api.KindInternal, Detail: "internal error", Cause: fmt.Errorf("panic: %v", r)}
				}
			}()
			return next(c)
		}
	}
}

// requestTimeout bounds each request's context; long solvers watch it.
func requestTimeout(d time.Duration) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			ctx, cancel := context.WithTimeout(c.Request().Context(), d)
			defer cancel()
			c.SetRequest(c.Request().WithContext(ctx))
			return next(c)
		}
	}
}

// bodyLimit rejects a declared oversize body at once and caps the reader
// for the rest, before anything reads the body.
func bodyLimit(limit int64) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			req := c.Request()
			if req.ContentLength > limit {
				return api.NewError(api.KindTooLarge, fmt.Sprintf("the request body exceeds the limit of %d bytes", limit))
			}
			if req.Body != nil {
				req.Body = http.MaxBytesReader(c.Response(), req.Body, limit)
			}
			return next(c)
		}
	}
}

// unlessStreamed applies mw to every route but the streamed ones, which
// read their own bodies within their own limits (see validator.go).
func unlessStreamed(streamed map[string]bool, mw echo.MiddlewareFunc) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		wrapped := mw(next)
		return func(c echo.Context) error {
			if streamed[c.Request().Method+" "+c.Path()] {
				return next(c)
			}
			return wrapped(c)
		}
	}
}

// clientName is the API key name the request was admitted under; "" for
// public routes and refused requests.
func clientName(c echo.Context) string {
	name, _ := c.Get(ContextKeyClient).(string)
	return name
}

// closeWhenDraining asks the client to close its connection after this
// answer once the instance is draining (see Run).
func closeWhenDraining(draining *atomic.Bool) echo.MiddlewareFunc {
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			if draining.Load() {
				c.Response().Header().Set(echo.HeaderConnection, "close")
			}
			return next(c)
		}
	}
}
