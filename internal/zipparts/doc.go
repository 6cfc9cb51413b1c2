// Package zipparts rewrites the entries of a ZIP container, such as an
// .xlsx workbook, for tests that need a workbook as another program
// writes it (a part's XML changed), or a broken one.
package zipparts
