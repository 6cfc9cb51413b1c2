// Package openblas calls the machine's OpenBLAS (cgo, Debian's
// libopenblas-dev) for the benchmark that times runner/fit's
// cross-products against it. Its calls are compiled only with the build
// tag openblas: `go test -tags openblas -run OpenBLAS -bench CrossOpenBLAS
// ./runner/fit/`.
package openblas
