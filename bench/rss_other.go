//go:build !unix

package main

import "os"

// peakRSS is unknown (0) where the standard library gives no resource
// usage of a child process.
func peakRSS(*os.ProcessState) int64 { return 0 }
