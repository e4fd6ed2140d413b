//go:build race

package cli

// crashRace reports that the tests run with the race detector, so the
// server binary they start is built with it too.
const crashRace = true
