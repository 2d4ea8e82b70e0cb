package api_test

import (
	"bytes"
	"net/http"
	"net/http/httptest"
	"strings"
	"syscall"
	"testing"
	"time"

	"wheelbench/api"
	"wheelbench/service"
	"wheelbench/store"
	"wheelbench/store/storetest"
)

// benchServer is the real stack (auth against a fresh database, spec
// validation, handler) and a read key, already used once so that it is
// in the key cache as it is in a running server.
func benchServer(b *testing.B) (http.Handler, string) {
	b.Helper()
	svc := service.New(store.New(storetest.Pool(b)), nil)
	srv, err := api.New(api.Config{Service: svc})
	if err != nil {
		b.Fatal(err)
	}
	_, k, err := svc.CreateOrganisation(b.Context(), "Benchmark (test)")
	if err != nil {
		b.Fatal(err)
	}
	return srv.Handler(), k.Secret
}

func serve(b *testing.B, h http.Handler, key, path string, body []byte) *httptest.ResponseRecorder {
	req := httptest.NewRequest("POST", path, bytes.NewReader(body))
	req.Header.Set("Content-Type", "application/json")
	req.Header.Set("Authorization", "Bearer "+key)
	rec := httptest.NewRecorder()
	h.ServeHTTP(rec, req)
	if rec.Code != 200 {
		b.Fatalf("%s: %d %s", path, rec.Code, rec.Body.Bytes()[:min(500, rec.Body.Len())])
	}
	return rec
}

// BenchmarkBatch10000: server time of one 10,000-wheel batch (the contract
// wheel, 3.5 MB of JSON) through the whole handler chain — auth (cached
// key), body limit, OpenAPI request validation, decoding, computing and
// encoding the 8 MB answer into an httptest.ResponseRecorder. The network
// is not in it. Budget: 50 ms.
func BenchmarkBatch10000(b *testing.B) {
	h, key := benchServer(b)
	wheel := strings.Join(strings.Fields(contractBody), " ")
	body := []byte(`{"wheels": [` + strings.TrimSuffix(strings.Repeat(wheel+",", service.MaxBatchWheels), ",") + `]}`)
	serve(b, h, key, "/v1/spoke-lengths/batch", body)
	b.SetBytes(int64(len(body)))
	b.ResetTimer()
	cpu := cpuTime()
	for b.Loop() {
		serve(b, h, key, "/v1/spoke-lengths/batch", body)
	}
	reportCPU(b, cpu)
}

// cpuTime is the process's user + system CPU time so far. On a shared
// machine wall time per op swings with other load; CPU time per op shows
// what the work itself costs (with 2 CPUs, wall ≥ CPU / 2).
func cpuTime() time.Duration {
	var ru syscall.Rusage
	if err := syscall.Getrusage(syscall.RUSAGE_SELF, &ru); err != nil {
		return 0
	}
	return time.Duration(ru.Utime.Nano() + ru.Stime.Nano())
}

func reportCPU(b *testing.B, start time.Duration) {
	b.ReportMetric(float64(cpuTime()-start)/float64(b.N)/1e6, "cpu-ms/op")
}

// BenchmarkSpokeLengths: one contract request through the whole handler
// chain, for comparison with the wrk figures.
func BenchmarkSpokeLengths(b *testing.B) {
	h, key := benchServer(b)
	body := []byte(contractBody)
	serve(b, h, key, "/v1/spoke-lengths", body)
	b.ReportAllocs()
	b.ResetTimer()
	cpu := cpuTime()
	for b.Loop() {
		serve(b, h, key, "/v1/spoke-lengths", body)
	}
	reportCPU(b, cpu)
}
