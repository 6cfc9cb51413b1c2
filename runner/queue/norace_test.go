//go:build !race

package queue

const raceDetector = false
