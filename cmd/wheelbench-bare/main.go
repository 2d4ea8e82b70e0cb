// Command wheelbench-bare is a load-test baseline, not part of the service:
// a bare net/http handler that decodes the same JSON as POST
// /v1/spoke-lengths into a geometry.Wheel and writes a small JSON reply, with
// no auth, no spec validation, no computation and no middleware. wrk runs
// against it and the real server side by side (see DEVELOPERS.md).
//
//	go run ./cmd/wheelbench-bare -addr 127.0.0.1:8091
//
// It listens on loopback addresses only.
package main

import (
	"encoding/json"
	"flag"
	"fmt"
	"log"
	"net"
	"net/http"
	"os"

	"wheelbench/service/geometry"
)

func main() {
	addr := flag.String("addr", "127.0.0.1:8091", "loopback address to listen on")
	flag.Parse()
	host, _, err := net.SplitHostPort(*addr)
	if ip := net.ParseIP(host); err != nil || ip == nil || !ip.IsLoopback() {
		fmt.Fprintln(os.Stderr, "wheelbench-bare: -addr must be a loopback address such as 127.0.0.1:8091")
		os.Exit(2)
	}
	http.HandleFunc("POST /v1/spoke-lengths", func(w http.ResponseWriter, r *http.Request) {
		var wheel geometry.Wheel
		dec := json.NewDecoder(r.Body)
		dec.DisallowUnknownFields()
		if err := dec.Decode(&wheel); err != nil {
			http.Error(w, `{"error":"bad body"}`, http.StatusBadRequest)
			return
		}
		w.Header().Set("Content-Type", "application/json")
		fmt.Fprintf(w, `{"spoke_count":%d}`+"\n", wheel.SpokeCount)
	})
	log.Fatal(http.ListenAndServe(*addr, nil))
}
