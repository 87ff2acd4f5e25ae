// Command warmrain maps warm-rain formation and drizzle, column by column, in
// gridded cloud retrievals. See doc.go for the manual.
package main

import (
	"os"

	"github.com/warmrain/warmrain/cmd/internal/app"
)

func main() {
	os.Exit(app.Run(os.Args[1:], os.Stdout, os.Stderr))
}
