// Package lock freezes a plan before the data are seen and compares later
// runs with the frozen form.
//
// `ordplan freeze PLAN` writes PLAN's lock file beside it (example.yaml ->
// example.lock.json): the SHA-256 of the plan's canonical form, the canonical
// form itself (so that a later change can be shown key by key), the UTC time,
// the program version and the registration identifier the author gives. The
// lock carries its own checksum, so a lock edited by hand is recognised. A
// lock is never replaced silently.
//
// Check finds the lock of a plan and compares: the plan matches, or it
// departs from the frozen form, each change explained by the plan's
// deviations list or not.
package lock
