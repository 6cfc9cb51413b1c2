// Package refdata locates the published reference data sets that the tests
// check against. They live in testdata/reference at the root of the
// repository (see its README for the published source of each set), so a
// fresh clone has everything its tests need.
package refdata
