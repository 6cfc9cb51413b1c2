// Package newfile writes a file that must not exist yet, atomically: the
// bytes go to a temporary file in the same folder, which is then linked
// to the final name; the link fails if the name exists, so nothing the
// user had is overwritten and no half-written file is left behind.
package newfile
