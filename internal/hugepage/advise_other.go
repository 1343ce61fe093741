//go:build !linux

package hugepage

// advise is a no-op where the platform has no huge-page advice.
func advise([]byte) {}
