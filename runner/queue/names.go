package queue

import (
	"strconv"
	"time"

	"ordplan/runner"
)

// Names of the JetStream resources the coordinator and the workers share.
const (
	JobStream    = "ORDPLAN_JOBS"
	JobSubject   = "ordplan.jobs" // subjects: ordplan.jobs.<batch>.<index>
	WorkerGroup  = "ordplan-workers"
	ResultBucket = "ordplan-results" // keys: <batch>.<index>
	DataBucket   = "ordplan-data"    // objects: hex SHA-256 of the bytes
	ReplyBucket  = "ordplan-replies" // objects: reply.<batch>.<index>, replies too large for a message
	// DefaultAckWait is how long a job may go without an acknowledgement
	// (final or in progress) before it is delivered to another worker.
	DefaultAckWait = 30 * time.Second
	// DefaultWaitNotice is how long a coordinator waits for the next
	// reply of a batch before it says what it waits for (then again after
	// twice as long, and so on).
	DefaultWaitNotice = time.Minute
	// DefaultJobDeadline is how long a coordinator waits for the next reply
	// of a batch before it publishes the missing jobs again (and, after a
	// second such wait, fails).
	DefaultJobDeadline = 30 * time.Minute
	// ResultTTL is how long replies (and unclaimed jobs) are kept for a
	// restarted coordinator.
	ResultTTL = 7 * 24 * time.Hour
	// ResultHistory is how many revisions of a result key the bucket
	// keeps (the most JetStream allows). Workers write a key once
	// (create-only); later revisions come only from overwrites, and the
	// coordinator takes the first valid revision, so a first reply is
	// lost only after this many overwrites before the coordinator reads it.
	ResultHistory = 64
	// DataTTL is how long a data file stays in the data store after its
	// upload; a coordinator uploads again a copy older than half of it.
	DataTTL = 7 * 24 * time.Hour
	// MaxDeliver bounds the deliveries of one job. A worker that receives
	// a job for the PoisonAfter+1-th time does not compute it: every
	// earlier worker stopped while holding it, and the coordinator gets an
	// error reply instead.
	MaxDeliver  = 5
	PoisonAfter = 3
	// MaxBadReplies is how many invalid or unauthenticated replies a job
	// may receive before the run fails.
	MaxBadReplies = 3
	// MaxReplyBytes bounds a reply kept in the replies store.
	MaxReplyBytes = 1 << 30
	// formatVersion enters every batch id and every seal: replies written
	// by an incompatible version are never reused, and a worker of another
	// version rejects a task instead of answering it. Raise it whenever a
	// message's meaning changes, not only its fields: a worker that drops a
	// field it does not know answers a different question (3: a partition
	// task's Theta is in coordinates centred by its Shift; 4: a reply's
	// Fault marks a failure of the worker, which an older worker's error
	// reply does not, so its errors must not be reused as fits' failures; 5: a
	// task carries the coordinator's Build, which a worker of another build
	// refuses, where an older worker would compute it).
	formatVersion = "ordplan-queue/5"
)

// Build is the build of ordplan a job is computed by: the program's
// version and, when the build has one, its source revision
// (runner.Revision). A coordinator's jobs carry its Build (Task.Build),
// which enters its batch ids, and a worker of another build refuses them
// (Worker.refuse), so that a run's fits are those of the build its
// run.json names.
func Build() string {
	if rev := runner.Revision(); rev != "" {
		return runner.Version + " (" + rev + ")"
	}
	return runner.Version
}

func jobSubject(batch string, index int) string {
	return JobSubject + "." + batch + "." + strconv.Itoa(index)
}

func resultKey(batch string, index int) string {
	return batch + "." + strconv.Itoa(index)
}

func replyObject(key string) string {
	return "reply." + key
}
