package main

import (
	"crypto/sha256"
	"encoding/hex"
	"os"
	"runtime"
	"time"

	"crosspec/dynsys"
)

// manifest records what is needed to reproduce a saved report: the
// program, the exact system file, the parameters and flags, and what the
// run found and how long it took.
type manifest struct {
	Program    string             `json:"program"`
	Version    string             `json:"version"`
	GoVersion  string             `json:"go_version"`
	Command    []string           `json:"command"`
	Created    string             `json:"created"`
	System     string             `json:"system"`
	SystemFile string             `json:"system_file"`
	SHA256     string             `json:"system_sha256"`
	Params     map[string]float64 `json:"params"`
	Flags      map[string]string  `json:"flags"`
	Outputs    []string           `json:"outputs"`
	// Counts holds the numbers of prime cycles per length (index = length)
	// and other sizes the run produced.
	Counts  map[string][]int   `json:"counts,omitempty"`
	Seconds map[string]float64 `json:"seconds"`
	Notes   []string           `json:"notes,omitempty"`
}

func newManifest(args []string, s *dynsys.System) *manifest {
	sum := sha256.Sum256(s.Content)
	params := make(map[string]float64, len(s.Params))
	for _, p := range s.Params {
		params[p.Name] = p.Value
	}
	return &manifest{
		Program:    "crosspec",
		Version:    version,
		GoVersion:  runtime.Version(),
		Command:    args,
		Created:    time.Now().UTC().Format(time.RFC3339),
		System:     s.Name,
		SystemFile: s.File,
		SHA256:     hex.EncodeToString(sum[:]),
		Params:     params,
		Flags:      map[string]string{},
		Counts:     map[string][]int{},
		Seconds:    map[string]float64{},
	}
}

// write saves the manifest as indented JSON at path.
func (m *manifest) write(path string) error {
	f, err := os.Create(path)
	if err != nil {
		return err
	}
	if err := writeJSON(f, m); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}
