// Package api is the HTTP face of lipidsvc: request and response types,
// their conversion to and from chem types, the handlers, the route list and
// the one place that turns errors into RFC 9457 problem+json answers.
//
// Handlers are maker functions that take their dependencies and return an
// echo.HandlerFunc; they return values or errors and never write error
// bodies themselves.
package api
