// Package api is ringsieve's thin HTTP layer: it binds and validates requests, calls screening
// and data, maps errors to problem+json, and renders results. The annotations below are the
// general information of the OpenAPI document that swag generates into openapi/.
//
//	@title						ringsieve API
//	@version					1.0
//	@description				Screens cyclic olefins for ring-opening metathesis polymerization (ROMP): descriptors from structure, ring-opening thermodynamics (ΔH_p, ΔS_p°, ΔG_p, T_c, [M]eq), verdicts with machine-readable reasons, and cautions. Errors are application/problem+json (RFC 9457).
//	@BasePath					/
//	@securityDefinitions.apikey	ApiKey
//	@in							header
//	@name						X-API-Key
package api
