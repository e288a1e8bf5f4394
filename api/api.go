// Package api holds corvane's HTTP contract, the OpenAPI 3.1 document
// openapi.yaml, embedded so that the service can serve it and tests can check
// the live routes and responses against it.
package api

import _ "embed"

// OpenAPI is the OpenAPI 3.1 document describing every route of the service.
//
//go:embed openapi.yaml
var OpenAPI []byte
