package grid

// Names and paths shared by every layer (doc.go, "Layers": layer 0).

import "strings"

func baseName(name string) string {
	if i := strings.LastIndexByte(name, '/'); i >= 0 {
		return name[i+1:]
	}
	return name
}

// isURL reports whether path is a URL (NCZarr, OPeNDAP) rather than a file name.
func isURL(path string) bool { return strings.Contains(path, "://") }
