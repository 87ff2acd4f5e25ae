//go:build race

package grid

// raceEnabled: the race detector's shadow memory and instrumentation allocate on
// their own, so tests that bound the bytes a run allocates skip the bound.
const raceEnabled = true
