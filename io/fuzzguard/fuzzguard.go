// Package fuzzguard bounds what one fuzz input may cost: the fuzz targets
// of the readers, the conversion and the fits all promise no endless loop
// and no unbounded memory, and check it with Bound.
package fuzzguard

import (
	"runtime/metrics"
	"testing"
	"time"
)

// Bound runs f and fails t if f does not return within d or allocates more
// than maxAlloc bytes on the heap (runtime/metrics /gc/heap/allocs:bytes,
// cheap enough to read for every input; other goroutines' allocations
// count too, so limits are set generously). A panic in f crashes the fuzz
// worker, which the fuzzer reports with the input.
func Bound(t testing.TB, d time.Duration, maxAlloc uint64, what string, f func()) {
	t.Helper()
	sample := []metrics.Sample{{Name: "/gc/heap/allocs:bytes"}}
	metrics.Read(sample)
	before := sample[0].Value.Uint64()
	done := make(chan struct{})
	go func() {
		defer close(done)
		f()
	}()
	timer := time.NewTimer(d)
	defer timer.Stop()
	select {
	case <-done:
	case <-timer.C:
		t.Fatalf("%s did not return within %v", what, d)
	}
	metrics.Read(sample)
	if a := sample[0].Value.Uint64() - before; a > maxAlloc {
		t.Fatalf("%s allocated %d bytes (limit %d)", what, a, maxAlloc)
	}
}
