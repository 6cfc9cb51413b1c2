// Package jsonkeys checks the project's JSON convention for tests: every
// object key is snake_case (lower-case words joined by underscores).
package jsonkeys
