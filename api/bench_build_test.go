package api_test

import (
	"bytes"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"syscall"
	"testing"
	"time"

	"github.com/google/uuid"

	"wheelbench/service"
)

// processCPU is this process's user+system CPU time so far (getrusage);
// PostgreSQL runs in other processes, so it is the service's share only.
func processCPU(b *testing.B) time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		b.Fatal(err)
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

// TestCreateBuildResponseIsTheBuild: the body POST /v1/builds answers must
// be exactly what encoding/json makes of the build it describes (decoded
// from that body and encoded again, with echo's trailing newline, and
// indented for ?pretty), for an inline spec with whitespace and a catalog
// spec at a location whose tensiometer is calibrated (stock from the
// location, target readings).
func TestCreateBuildResponseIsTheBuild(t *testing.T) {
	e := newEnv(t)
	w := e.keyA[service.RoleWrite]
	s := e.newShop(3)
	var tool struct{ ID uuid.UUID }
	e.want(e.do("POST", "/v1/tools", w, map[string]any{"label": "front bench tensiometer", "location_id": s.loc}), 201).json(t, &tool)
	e.publish(tool.ID, e.synthColumns(1.5, 1.8, 2.0, 2.3))
	inline, _ := json.Marshal(inlineSpec())
	var spaced bytes.Buffer
	if err := json.Indent(&spaced, inline, "\n ", "\t"); err != nil {
		t.Fatal(err)
	}
	catalog, _ := json.Marshal(s.spec())
	for _, c := range []struct {
		name, query, body string
	}{
		{"inline", "", `{"location_id": "` + s.loc.String() + `", "external_ref": "<A&B>", "spec": ` + spaced.String() + `}`},
		{"catalog", "", `{"location_id":"` + s.loc.String() + `","spec":` + string(catalog) + `}`},
		{"catalog, odd reference", "", `{"location_id":"` + s.loc.String() + `","external_ref":"r\u00e9f\u2028\t\"q\"\\","spec":` + string(catalog) + `}`},
		{"catalog, pretty", "?pretty", `{"location_id":"` + s.loc.String() + `","spec":` + string(catalog) + `}`},
	} {
		r := e.want(e.do("POST", "/v1/builds"+c.query, w, c.body), 201)
		var b service.Build
		if err := json.Unmarshal(r.body, &b); err != nil {
			t.Fatal(err)
		}
		if c.name != "inline" && (b.Snapshot.TargetReadings == nil || b.Snapshot.StockSource != "location_stock") {
			t.Fatalf("%s: expected target readings and location stock: %s", c.name, r.body)
		}
		var again bytes.Buffer
		enc := json.NewEncoder(&again)
		if c.query != "" {
			enc.SetIndent("", "  ") // echo's indent for ?pretty
		}
		if err := enc.Encode(b); err != nil {
			t.Fatal(err)
		}
		if !bytes.Equal(again.Bytes(), r.body) {
			t.Errorf("%s: the response is not the build encoded:\n got %s\nwant %s", c.name, r.body, again.Bytes())
		}
	}
}

// BenchmarkCreateBuild measures POST /v1/builds through the whole stack
// (auth, spec validation, geometry, fit, one transaction) in process. Its
// cpu-us/op is the test process's CPU per build (getrusage), which the
// database's latency and the VM's steal time disturb far less than ns/op.
func BenchmarkCreateBuild(b *testing.B) {
	e := newEnvB(b)
	var loc struct{ ID string }
	r := e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "bench"})
	_ = json.Unmarshal(r.body, &loc)
	body, _ := json.Marshal(map[string]any{"location_id": loc.ID, "spec": inlineSpec()})
	h := e.srv.Handler()
	key := e.keyA[service.RoleWrite]
	b.ResetTimer()
	cpu0 := processCPU(b)
	b.RunParallel(func(pb *testing.PB) {
		for pb.Next() {
			req := httptest.NewRequest("POST", "/v1/builds", bytes.NewReader(body))
			req.Header.Set("Authorization", "Bearer "+key)
			req.Header.Set("Content-Type", "application/json")
			rec := httptest.NewRecorder()
			h.ServeHTTP(rec, req)
			if rec.Code != http.StatusCreated {
				b.Fatalf("status %d: %s", rec.Code, rec.Body.String())
			}
		}
	})
	b.ReportMetric(float64((processCPU(b)-cpu0).Microseconds())/float64(b.N), "cpu-us/op")
}
