package main

import (
	"fmt"
	"io"
	"os"
	"strings"
	"sync/atomic"
	"time"
)

// isTerminal reports whether w is a character device (a terminal), without cgo or extra
// modules: pipes, files and /dev/null in CI are not.
func isTerminal(w io.Writer) bool {
	f, ok := w.(*os.File)
	if !ok {
		return false
	}
	st, err := f.Stat()
	if err != nil {
		return false
	}
	return st.Mode()&os.ModeCharDevice != 0 && f.Name() != os.DevNull
}

// progressDelay: work shorter than this shows no bar at all (issue 3: about 2 s).
const progressDelay = 2 * time.Second

// startProgress draws a bar on stderr while done climbs to total, if stderr is a
// terminal, quiet is false and the work lasts longer than progressDelay. The returned
// function stops it and clears the line.
func startProgress(e *env, label string, total int64, done *atomic.Int64, quiet bool) func() {
	if quiet || total <= 0 || !isTerminal(e.stderr) {
		return func() {}
	}
	stop := make(chan struct{})
	finished := make(chan struct{})
	go func() {
		defer close(finished)
		start := time.Now()
		tick := time.NewTicker(200 * time.Millisecond)
		defer tick.Stop()
		shown := false
		for {
			select {
			case <-stop:
				if shown {
					fmt.Fprintf(e.stderr, "\r%s\r", strings.Repeat(" ", 72))
				}
				return
			case <-tick.C:
				el := time.Since(start)
				if el < progressDelay {
					continue
				}
				shown = true
				d := done.Load()
				frac := float64(d) / float64(total)
				const width = 30
				n := int(frac * width)
				n = max(0, min(width, n))
				eta := ""
				if frac > 0.02 {
					rest := time.Duration(float64(el) * (1 - frac) / frac).Round(time.Second)
					eta = fmt.Sprintf(" ~%v left", rest)
				}
				fmt.Fprintf(e.stderr, "\r%-14s |%s%s| %3.0f%% %v%s   ", label,
					strings.Repeat("#", n), strings.Repeat(".", width-n), 100*frac, el.Round(time.Second), eta)
			}
		}
	}()
	return func() { close(stop); <-finished }
}
