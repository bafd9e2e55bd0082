// Package layout holds only a test: it asserts, with 'go list', the import
// edges the project's layout allows between its packages (see the README).
package layout
