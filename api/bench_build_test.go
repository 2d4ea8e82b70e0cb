package api_test

import (
	"bytes"
	"encoding/json"
	"net/http"
	"net/http/httptest"
	"syscall"
	"testing"
	"time"

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

// BenchmarkCreateBuild measures POST /v1/builds through the whole stack
// (auth, spec validation, geometry, fit, one transaction) in process. Its
// cpu-us/op is the test process's CPU per build (getrusage), which the
// database's latency and the VM's steal time disturb far less than ns/op.
func BenchmarkCreateBuild(b *testing.B) {
	e := newEnvB(b)
	var loc struct{ ID string }
	r := e.do("POST", "/v1/locations", e.keyA[service.RoleAdmin], map[string]any{"name": "bench"})
	_ = json.Unmarshal(r.body, &loc)
	body, _ := json.Marshal(map[string]any{"location_id": loc.ID, "spec": map[string]any{
		"spoke_count": 32, "hub": hubDims, "rim": rimDims, "spoke": spokeDims, "nipple": nippleDims,
		"crosses": map[string]any{"left": 3, "right": 3}, "target_tension_n": 1000, "stock": map[string]any{"increment_mm": 2}}})
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
