package dynsys

import (
	"embed"
	"fmt"
	"io/fs"
	"os"
	"path"
	"slices"
	"strings"
)

//go:embed catalog/*.toml
var catalogFiles embed.FS

// CatalogEntry is one system of the built-in catalog.
type CatalogEntry struct {
	// Name is what the command line accepts in place of a file path.
	Name string
	// Description is the entry's description line.
	Description string
	// Dim is the dimension of the phase space.
	Dim int
	// Closed reports whether the domain is invariant.
	Closed bool
	// References counts the known values the entry carries.
	References int
}

// CatalogNames returns the names of the catalog's systems, sorted.
func CatalogNames() []string {
	entries, err := fs.ReadDir(catalogFiles, "catalog")
	if err != nil {
		panic("dynsys: embedded catalog unreadable: " + err.Error())
	}
	var names []string
	for _, e := range entries {
		names = append(names, strings.TrimSuffix(e.Name(), ".toml"))
	}
	slices.Sort(names)
	return names
}

// Catalog loads every catalog system with its default parameters and
// summarises it.
func Catalog() ([]CatalogEntry, error) {
	var out []CatalogEntry
	for _, name := range CatalogNames() {
		s, err := Lookup(name, nil)
		if err != nil {
			return nil, err
		}
		out = append(out, CatalogEntry{Name: name, Description: s.Description, Dim: s.Dim(), Closed: s.Closed, References: len(s.References)})
	}
	return out, nil
}

// CatalogFile returns the text of the catalog system name.
func CatalogFile(name string) ([]byte, error) {
	data, err := catalogFiles.ReadFile(path.Join("catalog", name+".toml"))
	if err != nil {
		return nil, fmt.Errorf("no catalog system %q (known: %s)", name, strings.Join(CatalogNames(), ", "))
	}
	return data, nil
}

// Lookup loads the catalog system name with parameter overrides.
func Lookup(name string, overrides map[string]float64) (*System, error) {
	data, err := CatalogFile(name)
	if err != nil {
		return nil, err
	}
	s, err := Parse("catalog:"+name, data, overrides)
	if err != nil {
		return nil, err
	}
	return s, nil
}

// Open loads a system named on the command line: an existing file path, or
// else a catalog name. An argument that looks like a path (it contains a
// slash or ends in .toml) is always read as a file.
func Open(arg string, overrides map[string]float64) (*System, error) {
	looksLikePath := strings.ContainsRune(arg, '/') || strings.HasSuffix(arg, ".toml")
	if _, err := os.Stat(arg); err == nil || looksLikePath {
		return Load(arg, overrides)
	}
	if slices.Contains(CatalogNames(), arg) {
		return Lookup(arg, overrides)
	}
	return nil, fmt.Errorf("no system file or catalog system %q (catalog: %s)", arg, strings.Join(CatalogNames(), ", "))
}
