// Package version holds the colbridge version written into files and reports.
package version

// Version is the colbridge release this source tree is.
const Version = "0.1.0"
