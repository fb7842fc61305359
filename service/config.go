package service

import (
	"errors"
	"flag"
	"fmt"
	"io"
	"log/slog"
	"os"
	"runtime"
	"strconv"
	"strings"
	"time"

	"lipidsvc/api"
	"lipidsvc/chem/identity"
)

// Config is the service's whole configuration. Every field has a default
// and can be set with a LIPIDSVC_* environment variable; the listen
// addresses can also be given as flags, which win.
type Config struct {
	// Addr is the API listen address (LIPIDSVC_ADDR).
	Addr string
	// MetricsAddr is the internal Prometheus listen address
	// (LIPIDSVC_METRICS_ADDR); "off" disables the metrics server.
	MetricsAddr string
	// LogLevel is debug, info, warn or error (LIPIDSVC_LOG_LEVEL).
	LogLevel slog.Level
	// BodyLimitBytes caps request bodies (LIPIDSVC_BODY_LIMIT_BYTES).
	BodyLimitBytes int64
	// RequestTimeout bounds one request's work (LIPIDSVC_REQUEST_TIMEOUT).
	RequestTimeout time.Duration
	// ReadHeaderTimeout, ReadTimeout, WriteTimeout and IdleTimeout are the
	// http.Server limits (LIPIDSVC_READ_HEADER_TIMEOUT, …).
	ReadHeaderTimeout, ReadTimeout, WriteTimeout, IdleTimeout time.Duration
	// DrainDelay is how long the server keeps serving after readiness turns
	// 503 on SIGTERM, so that load balancers stop routing to it first
	// (LIPIDSVC_DRAIN_DELAY).
	DrainDelay time.Duration
	// ShutdownTimeout bounds the wait for in-flight requests
	// (LIPIDSVC_SHUTDOWN_TIMEOUT).
	ShutdownTimeout time.Duration
	// SpecFile is the plant's specification file (LIPIDSVC_SPEC_FILE),
	// read at start-up; its specifications, in PlantSpecifications, add to
	// or replace the embedded reference oils by id. A file that cannot be
	// read or parsed stops start-up with the line and field at fault.
	SpecFile            string
	PlantSpecifications []*identity.Specification
	// BatchMaxSamples caps the samples of one JSON or CSV batch
	// (LIPIDSVC_BATCH_MAX_SAMPLES); an NDJSON stream has no cap.
	BatchMaxSamples int
	// BatchBodyLimitBytes caps a JSON or CSV batch body
	// (LIPIDSVC_BATCH_BODY_LIMIT_BYTES); an NDJSON line is capped by
	// BodyLimitBytes.
	BatchBodyLimitBytes int64
	// BatchTimeout bounds a whole batch or stream (LIPIDSVC_BATCH_TIMEOUT);
	// each sample's evaluations have RequestTimeout.
	BatchTimeout time.Duration
	// BatchWorkers is how many samples are evaluated at once
	// (LIPIDSVC_BATCH_WORKERS); 0 means one per core.
	BatchWorkers int
	// InFlight limits the requests in flight per cost class
	// (LIPIDSVC_MAX_INFLIGHT_CHEAP, _MEDIUM, _EXPENSIVE, _BATCH).
	InFlight InFlightLimits
	// MaxBodyReads bounds the bodies read and validated at once
	// (LIPIDSVC_MAX_BODY_READS); BodyReadWait is how long a request waits
	// for a slot before 503 (LIPIDSVC_BODY_READ_WAIT).
	MaxBodyReads int
	BodyReadWait time.Duration
	// MaxConnections caps the open connections of the API listener
	// (LIPIDSVC_MAX_CONNECTIONS); 0 means no cap.
	MaxConnections int
	// APIKeysFile names the file of API keys (LIPIDSVC_API_KEYS_FILE);
	// unset, the service answers without keys. APIKeys are its keys.
	APIKeysFile string
	APIKeys     []APIKey
	// CORSOrigins are the browser origins allowed to call the API
	// (LIPIDSVC_CORS_ORIGINS, comma-separated); none means CORS is off.
	CORSOrigins []string
}

// DefaultConfig is the configuration with nothing set.
func DefaultConfig() Config {
	batch := api.DefaultBatchLimits()
	return Config{
		Addr:              ":8080",
		MetricsAddr:       ":9090",
		LogLevel:          slog.LevelInfo,
		BodyLimitBytes:    512 << 10,
		RequestTimeout:    10 * time.Second,
		ReadHeaderTimeout: 5 * time.Second,
		ReadTimeout:       15 * time.Second,
		WriteTimeout:      30 * time.Second,
		IdleTimeout:       30 * time.Second,
		DrainDelay:        5 * time.Second,
		ShutdownTimeout:   15 * time.Second,

		BatchMaxSamples:     batch.MaxSamples,
		BatchBodyLimitBytes: batch.BodyLimitBytes,
		BatchTimeout:        batch.Timeout,

		InFlight:       DefaultInFlightLimits(),
		MaxBodyReads:   4 * runtime.GOMAXPROCS(0),
		BodyReadWait:   2 * time.Second,
		MaxConnections: 512,
	}
}

// LoadConfig reads the environment through getenv and the flags in args
// (without the program name), and validates the result.
func LoadConfig(args []string, getenv func(string) string) (Config, error) {
	cfg := DefaultConfig()
	var errs []error
	str := func(name string, dst *string) {
		if v, ok := lookup(getenv, name); ok {
			*dst = v
		}
	}
	dur := func(name string, dst *time.Duration) {
		if v, ok := lookup(getenv, name); ok {
			d, err := time.ParseDuration(v)
			if err != nil || d < 0 {
				errs = append(errs, fmt.Errorf("%s: %q is not a non-negative duration such as 10s", name, v))
				return
			}
			*dst = d
		}
	}
	str("LIPIDSVC_ADDR", &cfg.Addr)
	str("LIPIDSVC_METRICS_ADDR", &cfg.MetricsAddr)
	if cfg.MetricsAddr == "off" {
		cfg.MetricsAddr = ""
	}
	if v, ok := lookup(getenv, "LIPIDSVC_LOG_LEVEL"); ok {
		if err := cfg.LogLevel.UnmarshalText([]byte(v)); err != nil {
			errs = append(errs, fmt.Errorf("LIPIDSVC_LOG_LEVEL: %q is not debug, info, warn or error", v))
		}
	}
	if v, ok := lookup(getenv, "LIPIDSVC_BODY_LIMIT_BYTES"); ok {
		n, err := strconv.ParseInt(v, 10, 64)
		if err != nil || n < 1024 || n > 64<<20 {
			errs = append(errs, fmt.Errorf("LIPIDSVC_BODY_LIMIT_BYTES: %q is not a whole number from 1024 to 67108864", v))
		} else {
			cfg.BodyLimitBytes = n
		}
	}
	dur("LIPIDSVC_REQUEST_TIMEOUT", &cfg.RequestTimeout)
	dur("LIPIDSVC_READ_HEADER_TIMEOUT", &cfg.ReadHeaderTimeout)
	dur("LIPIDSVC_READ_TIMEOUT", &cfg.ReadTimeout)
	dur("LIPIDSVC_WRITE_TIMEOUT", &cfg.WriteTimeout)
	dur("LIPIDSVC_IDLE_TIMEOUT", &cfg.IdleTimeout)
	dur("LIPIDSVC_DRAIN_DELAY", &cfg.DrainDelay)
	dur("LIPIDSVC_SHUTDOWN_TIMEOUT", &cfg.ShutdownTimeout)
	dur("LIPIDSVC_BATCH_TIMEOUT", &cfg.BatchTimeout)
	intIn := func(name string, dst *int, lo, hi int) {
		if v, ok := lookup(getenv, name); ok {
			n, err := strconv.Atoi(v)
			if err != nil || n < lo || n > hi {
				errs = append(errs, fmt.Errorf("%s: %q is not a whole number from %d to %d", name, v, lo, hi))
				return
			}
			*dst = n
		}
	}
	intIn("LIPIDSVC_BATCH_MAX_SAMPLES", &cfg.BatchMaxSamples, 1, 1000000)
	intIn("LIPIDSVC_BATCH_WORKERS", &cfg.BatchWorkers, 0, 256)
	intIn("LIPIDSVC_MAX_INFLIGHT_CHEAP", &cfg.InFlight.Cheap, 1, 100000)
	intIn("LIPIDSVC_MAX_INFLIGHT_MEDIUM", &cfg.InFlight.Medium, 1, 100000)
	intIn("LIPIDSVC_MAX_INFLIGHT_EXPENSIVE", &cfg.InFlight.Expensive, 1, 100000)
	intIn("LIPIDSVC_MAX_INFLIGHT_BATCH", &cfg.InFlight.Batch, 1, 1000)
	intIn("LIPIDSVC_MAX_BODY_READS", &cfg.MaxBodyReads, 1, 10000)
	intIn("LIPIDSVC_MAX_CONNECTIONS", &cfg.MaxConnections, 0, 1000000)
	dur("LIPIDSVC_BODY_READ_WAIT", &cfg.BodyReadWait)
	str("LIPIDSVC_API_KEYS_FILE", &cfg.APIKeysFile)
	if cfg.APIKeysFile != "" {
		keys, err := readAPIKeys(cfg.APIKeysFile)
		if err != nil {
			errs = append(errs, err)
		}
		cfg.APIKeys = keys
	}
	if v, ok := lookup(getenv, "LIPIDSVC_CORS_ORIGINS"); ok {
		for _, o := range strings.Split(v, ",") {
			o = strings.TrimSpace(o)
			if o == "" {
				continue
			}
			if o == "*" || !(strings.HasPrefix(o, "https://") || strings.HasPrefix(o, "http://")) {
				errs = append(errs, fmt.Errorf("LIPIDSVC_CORS_ORIGINS: %q is not an origin such as https://lims.northbay.example (no wildcard)", o))
				continue
			}
			cfg.CORSOrigins = append(cfg.CORSOrigins, o)
		}
	}
	if v, ok := lookup(getenv, "LIPIDSVC_BATCH_BODY_LIMIT_BYTES"); ok {
		n, err := strconv.ParseInt(v, 10, 64)
		if err != nil || n < 1024 || n > 1<<30 {
			errs = append(errs, fmt.Errorf("LIPIDSVC_BATCH_BODY_LIMIT_BYTES: %q is not a whole number from 1024 to 1073741824", v))
		} else {
			cfg.BatchBodyLimitBytes = n
		}
	}
	str("LIPIDSVC_SPEC_FILE", &cfg.SpecFile)
	if cfg.SpecFile != "" {
		specs, err := readSpecFile(cfg.SpecFile)
		if err != nil {
			errs = append(errs, err)
		}
		cfg.PlantSpecifications = specs
	}

	fs := flag.NewFlagSet("lipidsvc", flag.ContinueOnError)
	fs.SetOutput(io.Discard)
	fs.StringVar(&cfg.Addr, "addr", cfg.Addr, "API listen address")
	fs.StringVar(&cfg.MetricsAddr, "metrics-addr", cfg.MetricsAddr, "metrics listen address (empty disables)")
	if err := fs.Parse(args); err != nil {
		errs = append(errs, fmt.Errorf("flags: %w", err))
	} else if fs.NArg() > 0 {
		errs = append(errs, fmt.Errorf("flags: unexpected argument %q", fs.Arg(0)))
	}
	if cfg.Addr == "" {
		errs = append(errs, errors.New("LIPIDSVC_ADDR must not be empty"))
	}
	if cfg.RequestTimeout <= 0 {
		errs = append(errs, errors.New("LIPIDSVC_REQUEST_TIMEOUT must be positive"))
	}
	if cfg.WriteTimeout > 0 && cfg.WriteTimeout <= cfg.RequestTimeout {
		errs = append(errs, errors.New("LIPIDSVC_WRITE_TIMEOUT must exceed LIPIDSVC_REQUEST_TIMEOUT, or answers are cut off"))
	}
	if cfg.ShutdownTimeout < cfg.RequestTimeout {
		errs = append(errs, errors.New("LIPIDSVC_SHUTDOWN_TIMEOUT must be at least LIPIDSVC_REQUEST_TIMEOUT, or requests in flight at shutdown are cut off"))
	}
	return cfg, errors.Join(errs...)
}

func lookup(getenv func(string) string, name string) (string, bool) {
	v := strings.TrimSpace(getenv(name))
	return v, v != ""
}

// LogValue lets the configuration be logged once at start-up; it holds no
// secrets.
func (c Config) LogValue() slog.Value {
	return slog.GroupValue(
		slog.String("addr", c.Addr),
		slog.String("metrics_addr", c.MetricsAddr),
		slog.String("log_level", c.LogLevel.String()),
		slog.String("spec_file", c.SpecFile),
		slog.Int("plant_specifications", len(c.PlantSpecifications)),
		slog.Int64("body_limit_bytes", c.BodyLimitBytes),
		slog.String("request_timeout", c.RequestTimeout.String()),
		slog.String("read_header_timeout", c.ReadHeaderTimeout.String()),
		slog.String("read_timeout", c.ReadTimeout.String()),
		slog.String("write_timeout", c.WriteTimeout.String()),
		slog.String("idle_timeout", c.IdleTimeout.String()),
		slog.String("drain_delay", c.DrainDelay.String()),
		slog.String("shutdown_timeout", c.ShutdownTimeout.String()),
		slog.Int("batch_max_samples", c.BatchMaxSamples),
		slog.Int64("batch_body_limit_bytes", c.BatchBodyLimitBytes),
		slog.String("batch_timeout", c.BatchTimeout.String()),
		slog.Int("batch_workers", c.BatchWorkers),
		slog.Int("max_inflight_cheap", c.InFlight.Cheap),
		slog.Int("max_inflight_medium", c.InFlight.Medium),
		slog.Int("max_inflight_expensive", c.InFlight.Expensive),
		slog.Int("max_inflight_batch", c.InFlight.Batch),
		slog.Int("max_body_reads", c.MaxBodyReads),
		slog.Int("max_connections", c.MaxConnections),
		slog.String("api_keys_file", c.APIKeysFile),
		slog.Int("api_keys", len(c.APIKeys)),
		slog.Any("cors_origins", c.CORSOrigins),
	)
}

// readSpecFile reads and parses the plant's specification file.
func readSpecFile(path string) ([]*identity.Specification, error) {
	data, err := os.ReadFile(path)
	if err != nil {
		return nil, fmt.Errorf("LIPIDSVC_SPEC_FILE: %w", err)
	}
	specs, err := api.ParseSpecificationDocument(data)
	if err != nil {
		return nil, fmt.Errorf("LIPIDSVC_SPEC_FILE %s: %w", path, err)
	}
	return specs, nil
}
