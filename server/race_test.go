//go:build race

package server

// raceBuild reports that the tests run under the race detector.
const raceBuild = true
