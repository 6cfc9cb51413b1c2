// Package runner runs analysis plans: it reads the data, fits every model a
// plan lists (in parallel), runs the tests, applies the decision rules and
// records every decision. It also builds single models for `ordplan fit`.
package runner
