package main

import (
	"os"
	"path/filepath"
)

// defaultDataDir is $XDG_DATA_HOME/matchbench, else ~/.local/share/matchbench,
// else ./data when no home folder is known.
func defaultDataDir() string {
	if d := os.Getenv("XDG_DATA_HOME"); d != "" {
		return filepath.Join(d, "matchbench")
	}
	if h, err := os.UserHomeDir(); err == nil && h != "" {
		return filepath.Join(h, ".local", "share", "matchbench")
	}
	return "data"
}
