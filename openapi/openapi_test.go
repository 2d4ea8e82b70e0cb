package openapi

import "testing"

func TestLoadValidates(t *testing.T) {
	doc, err := Load()
	if err != nil {
		t.Fatal(err)
	}
	if doc.OpenAPI != "3.0.3" {
		t.Errorf("openapi version %q, want 3.0.3", doc.OpenAPI)
	}
	if doc.Paths.Find("/v1/me") == nil {
		t.Error("/v1/me missing")
	}
}
