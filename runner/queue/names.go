package queue

import (
	"strconv"
	"time"
)

// Names of the JetStream resources the coordinator and the workers share.
const (
	JobStream    = "ORDPLAN_JOBS"
	JobSubject   = "ordplan.jobs" // subjects: ordplan.jobs.<batch>.<index>
	WorkerGroup  = "ordplan-workers"
	ResultBucket = "ordplan-results" // keys: <batch>.<index>
	DataBucket   = "ordplan-data"    // objects: hex SHA-256 of the bytes
	// DefaultAckWait is how long a job may go without an acknowledgement
	// (final or in progress) before it is delivered to another worker.
	DefaultAckWait = 30 * time.Second
	// ResultTTL is how long replies are kept for a restarted coordinator.
	ResultTTL = 7 * 24 * time.Hour
	// formatVersion enters every batch id: replies written by an
	// incompatible version are never reused.
	formatVersion = "ordplan-queue/1"
)

func jobSubject(batch string, index int) string {
	return JobSubject + "." + batch + "." + strconv.Itoa(index)
}

func resultKey(batch string, index int) string {
	return batch + "." + strconv.Itoa(index)
}
