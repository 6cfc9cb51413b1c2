//go:build !linux

package data

// adviseHuge does nothing where huge pages are not asked for (see
// hugepages_linux.go).
func adviseHuge[T any]([]T) {}
