//go:build race

package queue

// raceDetector: the race detector slows the engine twentyfold; the test of
// a 433-parameter reply skips under it (the same paths run with smaller
// replies in the other tests).
const raceDetector = true
