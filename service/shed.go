package service

import (
	"fmt"
	"runtime"
	"time"

	"github.com/labstack/echo/v4"

	"lipidsvc/api"
)

// Cost classes of the routes. A class at its in-flight limit answers at
// once with 503 and Retry-After, before the body is read: shedding costs
// next to nothing, so an overloaded instance stays responsive and its
// memory bounded, and a retrying client (or the load balancer) moves on.
const (
	ClassCheap     = "cheap"
	ClassMedium    = "medium"
	ClassExpensive = "expensive"
	ClassBatch     = "batch"
)

// routeClasses are the calculation routes by class; the probes, pages,
// contract and catalogue reads are not limited.
var routeClasses = map[string]string{
	"POST /v1/properties":           ClassCheap,
	"POST /v1/hydrogen-demand":      ClassCheap,
	"POST /v1/conformity":           ClassCheap,
	"POST /v1/plots/composition":    ClassCheap,
	"POST /v1/hardening/forecast":   ClassMedium,
	"POST /v1/melting":              ClassMedium,
	"POST /v1/blends":               ClassMedium,
	"POST /v1/plots/solid-fat":      ClassMedium,
	"POST /v1/plots/hardening-path": ClassMedium,
	"POST /v1/hardening/fit":        ClassExpensive,
	"POST /v1/melting/calibrate":    ClassExpensive,
	"POST /v1/blends/optimize":      ClassExpensive,
	"POST /v1/batch":                ClassBatch,
}

// InFlightLimits are the in-flight limits by class.
type InFlightLimits struct {
	Cheap, Medium, Expensive, Batch int
}

// DefaultInFlightLimits scale with the cores: a cheap request takes tens
// of microseconds, a medium one milliseconds, an expensive one up to the
// request time limit; a batch uses every core by itself.
func DefaultInFlightLimits() InFlightLimits {
	n := runtime.GOMAXPROCS(0)
	return InFlightLimits{Cheap: 64 * n, Medium: 4 * n, Expensive: n, Batch: 2}
}

// shed limits the requests in flight per class.
func shed(l InFlightLimits, m *Metrics) echo.MiddlewareFunc {
	sems := map[string]chan struct{}{
		ClassCheap: make(chan struct{}, l.Cheap), ClassMedium: make(chan struct{}, l.Medium),
		ClassExpensive: make(chan struct{}, l.Expensive), ClassBatch: make(chan struct{}, l.Batch),
	}
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			class, ok := routeClasses[c.Request().Method+" "+c.Path()]
			if !ok {
				return next(c)
			}
			sem := sems[class]
			select {
			case sem <- struct{}{}:
				defer func() { <-sem }()
				return next(c)
			default:
				m.shed.WithLabelValues(class).Inc()
				return api.NewError(api.KindOverloaded, fmt.Sprintf(
					"the %s requests in flight are at their limit of %d on this instance; retry after %d s", class, cap(sem), api.RetryAfterSeconds))
			}
		}
	}
}

// bodyReads bounds the bodies being read and validated at once, the
// memory a burst of large bodies can hold: a request waits up to wait for
// a slot, then gets 503.
func bodyReads(n int, wait time.Duration, m *Metrics) echo.MiddlewareFunc {
	sem := make(chan struct{}, n)
	return func(next echo.HandlerFunc) echo.HandlerFunc {
		return func(c echo.Context) error {
			if c.Request().Method != "POST" {
				return next(c)
			}
			select {
			case sem <- struct{}{}: // the usual case: a slot is free
			default:
				t := time.NewTimer(wait)
				defer t.Stop()
				select {
				case sem <- struct{}{}:
				case <-t.C:
					m.shed.WithLabelValues("body_read").Inc()
					return api.NewError(api.KindOverloaded, fmt.Sprintf("%d request bodies are being read; retry after %d s", n, api.RetryAfterSeconds))
				case <-c.Request().Context().Done():
					return c.Request().Context().Err()
				}
			}
			released := false
			release := func() {
				if !released {
					released = true
					<-sem
				}
			}
			defer release()
			c.Set(contextKeyReleaseBody, release)
			return next(c)
		}
	}
}

// contextKeyReleaseBody holds the function that gives the body-read slot
// back once the body is read and validated.
const contextKeyReleaseBody = "lipidsvc.release_body"
