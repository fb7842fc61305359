// Package chem holds the science of lipidsvc: the fatty-acid catalogue, the
// label parser, fatty-acid profiles and the properties calculated from them
// (iodine and saponification values, mean molar masses, composition sums and
// nutritional indices).
//
// The package is pure: value types and deterministic functions that import
// only the standard library and gonum. It knows nothing of HTTP, JSON,
// logging or metrics, so any caller (the HTTP API, a batch tool, a test) gets
// the same numbers and the same domain checks. Sub-packages hold the larger
// models (hardening, melting).
package chem
