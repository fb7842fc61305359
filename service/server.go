package service

import (
	"context"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"log/slog"
	"net"
	"net/http"
	"sync/atomic"
	"time"

	"github.com/getkin/kin-openapi/openapi3"
	"github.com/labstack/echo/v4"
	"github.com/labstack/echo/v4/middleware"
	"golang.org/x/net/netutil"

	"lipidsvc/api"
	"lipidsvc/chem"
	"lipidsvc/chem/identity"
)

// App is the assembled HTTP handler with the state the lifecycle needs.
type App struct {
	Echo     *echo.Echo
	Metrics  *Metrics
	ready    atomic.Bool
	draining atomic.Bool
}

// SetReady flips readiness; /readyz answers 503 while it is false.
func (a *App) SetReady(ready bool) { a.ready.Store(ready) }

// NewApp builds the echo instance with every middleware and route. Tests
// use it to drive the real handler through httptest.
func NewApp(cfg Config, doc *openapi3.T, spec []byte, logger *slog.Logger) *App {
	a := &App{Echo: echo.New(), Metrics: NewMetrics()}
	e := a.Echo
	e.HideBanner = true
	e.HidePort = true
	e.Debug = false
	e.Logger.SetOutput(io.Discard)
	e.HTTPErrorHandler = api.ErrorHandler(logger, a.Metrics)

	specJSON, err := json.Marshal(doc)
	if err != nil {
		panic("service: the contract does not encode as JSON: " + err.Error())
	}
	streamed := streamedRoutes(doc)
	schemas, err := compileContract(doc)
	if err != nil {
		// LoadSpec compiled the same document without error.
		panic("service: the contract's schemas do not compile: " + err.Error())
	}
	validate := newValidator(schemas)
	e.Use(
		closeWhenDraining(&a.draining),
		requestID(),
		observe(logger, a.Metrics),
		recoverPanics(logger),
		securityHeaders(),
	)
	if len(cfg.CORSOrigins) > 0 {
		e.Use(middleware.CORSWithConfig(middleware.CORSConfig{
			AllowOrigins:  cfg.CORSOrigins,
			AllowMethods:  []string{http.MethodGet, http.MethodPost},
			AllowHeaders:  []string{echo.HeaderContentType, echo.HeaderAuthorization, "X-API-Key", HeaderRequestID},
			ExposeHeaders: []string{HeaderRequestID, "Retry-After"},
			MaxAge:        600,
		}))
	}
	e.Use(
		authenticate(cfg.APIKeys, a.Metrics),
		shed(cfg.InFlight, a.Metrics),
		unlessStreamed(streamed, requestTimeout(cfg.RequestTimeout)),
		unlessStreamed(streamed, bodyLimit(cfg.BodyLimitBytes)),
		unlessStreamed(streamed, bodyReads(cfg.MaxBodyReads, cfg.BodyReadWait, a.Metrics)),
		unlessStreamed(streamed, readBodies(schemas)),
	)
	api.Routes(e, api.Deps{
		Catalogue: chem.NewCatalogue(),
		Library:   identity.NewLibrary(cfg.PlantSpecifications),
		Spec:      spec,
		SpecJSON:  specJSON,
		Ready:     a.ready.Load,
		Recorder:  a.Metrics,
		Logger:    logger,
		Version:   version(),
		Validate:  validate,
		Batch: api.BatchLimits{
			MaxSamples:     cfg.BatchMaxSamples,
			BodyLimitBytes: cfg.BatchBodyLimitBytes,
			LineLimitBytes: cfg.BodyLimitBytes,
			Timeout:        cfg.BatchTimeout,
			SampleTimeout:  cfg.RequestTimeout,
			ReadTimeout:    cfg.ReadTimeout,
			WriteTimeout:   cfg.WriteTimeout,
			Workers:        cfg.BatchWorkers,
		},
	})
	a.SetReady(true)
	return a
}

// NewLogger is the one JSON logger of the process.
func NewLogger(w io.Writer, level slog.Level) *slog.Logger {
	return slog.New(slog.NewJSONHandler(w, &slog.HandlerOptions{Level: level}))
}

// Run is the whole program: it reads the configuration, validates the
// contract, serves the API and the metrics until ctx is cancelled (SIGTERM
// or SIGINT in main), then shuts down gracefully: readiness goes 503, the
// server keeps answering for the drain delay, stops accepting, lets
// in-flight requests finish within the shutdown timeout, and returns.
func Run(ctx context.Context, args []string, getenv func(string) string, stdout io.Writer, spec []byte) error {
	cfg, err := LoadConfig(args, getenv)
	if err != nil {
		return fmt.Errorf("configuration: %w", err)
	}
	logOut := newBufferedWriter(stdout)
	defer logOut.Close()
	logger := NewLogger(logOut, cfg.LogLevel)
	doc, err := LoadSpec(ctx, spec)
	if err != nil {
		return err
	}
	app := NewApp(cfg, doc, spec, logger)

	apiLn, err := net.Listen("tcp", cfg.Addr)
	if err != nil {
		return fmt.Errorf("listening on %s: %w", cfg.Addr, err)
	}
	if cfg.MaxConnections > 0 {
		apiLn = netutil.LimitListener(apiLn, cfg.MaxConnections)
	}
	servers := []*http.Server{newServer(cfg, app.Echo, logger)}
	listeners := []net.Listener{apiLn}
	if cfg.MetricsAddr != "" {
		mLn, err := net.Listen("tcp", cfg.MetricsAddr)
		if err != nil {
			apiLn.Close()
			return fmt.Errorf("listening on %s: %w", cfg.MetricsAddr, err)
		}
		mux := http.NewServeMux()
		mux.Handle("GET /metrics", app.Metrics.Handler())
		servers = append(servers, newServer(cfg, mux, logger))
		listeners = append(listeners, mLn)
	}
	logger.Info("starting", "config", cfg)

	errc := make(chan error, len(servers))
	for i, srv := range servers {
		go func() {
			if err := srv.Serve(listeners[i]); err != nil && !errors.Is(err, http.ErrServerClosed) {
				errc <- err
			}
		}()
	}
	attrs := []any{"addr", apiLn.Addr().String()}
	if len(listeners) > 1 {
		attrs = append(attrs, "metrics_addr", listeners[1].Addr().String())
	}
	logger.Info("listening", attrs...)

	var serveErr error
	select {
	case <-ctx.Done():
		logger.Info("shutdown requested")
	case serveErr = <-errc:
		logger.Error("server failed", "error", serveErr)
	}

	app.SetReady(false)
	// No new keep-alive exchanges once shutdown begins: every answer from
	// now on carries Connection: close, so a client opens a new connection
	// (to another instance, once the load balancer has seen /readyz) rather
	// than send on one the server is about to close. Idle connections are
	// not closed now — a request may be on its way on one — but at the end
	// of the drain, when traffic has moved.
	app.draining.Store(true)
	if serveErr == nil && cfg.DrainDelay > 0 {
		logger.Info("draining", "delay", cfg.DrainDelay.String())
		time.Sleep(cfg.DrainDelay)
	}
	for _, srv := range servers {
		srv.SetKeepAlivesEnabled(false)
	}
	shutdownCtx, cancel := context.WithTimeout(context.Background(), cfg.ShutdownTimeout)
	defer cancel()
	var shutdownErr error
	for _, srv := range servers {
		if err := srv.Shutdown(shutdownCtx); err != nil {
			shutdownErr = errors.Join(shutdownErr, err)
		}
	}
	if shutdownErr != nil {
		logger.Error("shutdown incomplete", "error", shutdownErr)
		return errors.Join(serveErr, shutdownErr)
	}
	logger.Info("stopped")
	return serveErr
}

func newServer(cfg Config, h http.Handler, logger *slog.Logger) *http.Server {
	return &http.Server{
		Handler:           h,
		ReadHeaderTimeout: cfg.ReadHeaderTimeout,
		ReadTimeout:       cfg.ReadTimeout,
		WriteTimeout:      cfg.WriteTimeout,
		IdleTimeout:       cfg.IdleTimeout,
		MaxHeaderBytes:    64 << 10,
		ErrorLog:          slog.NewLogLogger(logger.Handler(), slog.LevelWarn),
	}
}
