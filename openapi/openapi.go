// Package openapi embeds wheelbench's OpenAPI 3.0.3 document, the single
// source of truth for the HTTP API, and loads and validates it.
package openapi

import (
	"context"
	_ "embed"
	"fmt"

	"github.com/getkin/kin-openapi/openapi3"
)

//go:embed openapi.yaml
var document []byte

// YAML returns the document as served at /openapi.yaml.
func YAML() []byte { return document }

// Load parses and validates the document. It clears `servers` so that
// request routing matches on paths alone.
func Load() (*openapi3.T, error) {
	loader := openapi3.NewLoader()
	doc, err := loader.LoadFromData(document)
	if err != nil {
		return nil, fmt.Errorf("openapi: parse: %w", err)
	}
	if err := doc.Validate(context.Background()); err != nil {
		return nil, fmt.Errorf("openapi: invalid document: %w", err)
	}
	doc.Servers = nil
	return doc, nil
}
