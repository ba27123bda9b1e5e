//go:build !linux

package ncio

// StartWriteback does nothing on this system (see the Linux version).
func (w *Writer) StartWriteback() error { return nil }
