// Package service assembles lipidsvc: configuration, the echo instance and
// its middleware (request ids, logging, metrics, body limit, time limit,
// OpenAPI validation), the probes, and the server lifecycle with graceful
// shutdown.
package service
