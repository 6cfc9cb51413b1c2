// Package numfmt formats numbers for tables and logs, the same way on
// every machine.
package numfmt
