// Package render writes what people read: the plain-text table of a single
// fit, and the Markdown and HTML reports of a plan run with their charts.
package render
