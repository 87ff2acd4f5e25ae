//go:build !race

package grid

// raceEnabled: see race_on_test.go.
const raceEnabled = false
