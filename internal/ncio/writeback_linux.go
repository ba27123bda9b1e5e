package ncio

import (
	"os"
	"syscall"
)

// StartWriteback asks the operating system to start writing to disk the data written
// so far, without waiting for it (Linux sync_file_range with SYNC_FILE_RANGE_WRITE on the
// temporary file). Commit's fsync then has less left to do: a caller that calls this
// every few tens of megabytes overlaps the disk writes with its own work. It does not
// call the NetCDF library (so it does not wait for the I/O goroutine) and never makes
// the Writer fail: errors are returned for information only. Elsewhere it does nothing.
func (w *Writer) StartWriteback() error {
	f, err := os.Open(w.tmp)
	if err != nil {
		return err
	}
	defer f.Close()
	const syncFileRangeWrite = 2 // SYNC_FILE_RANGE_WRITE, linux/fs.h
	return syscall.SyncFileRange(int(f.Fd()), 0, 0, syncFileRangeWrite)
}
