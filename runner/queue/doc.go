// Package queue runs a plan's fits on worker processes through NATS
// JetStream.
//
// With a JetStream server reachable by every machine (for example
// `nats-server -js`):
//
//	export ORDPLAN_QUEUE_SECRET_FILE=queue.key          # the same secret everywhere
//	ordplan worker --queue nats://HOST:4222             # on each worker machine
//	ordplan run plan.yaml --queue nats://HOST:4222      # writes the same report as a local run
//
// Stepwise selection, the tests and the rules run on the coordinator; the
// grid's fits run on the workers through runner.ExecuteJob, which reads
// the data and fits as a local run does, and come back gob-encoded, so the
// report is the same byte for byte. FitPartitioned fits one model on data
// split into partitions that only the workers read.
//
// The coordinator (ordplan run --queue URL) and the workers (ordplan worker
// --queue URL) share four JetStream resources:
//
//   - the stream ORDPLAN_JOBS (work-queue retention, file storage) on the
//     subjects ordplan.jobs.<batch>.<index>, read by the durable pull
//     consumer "ordplan-workers" that every worker shares; a job leaves the
//     stream when a worker acknowledges it, and is delivered again when its
//     ack deadline passes without an acknowledgement (a worker that died);
//     workers send in-progress acknowledgements while they fit, so long
//     healthy jobs are not delivered twice; a job is delivered at most
//     MaxDeliver times, and one delivered more than PoisonAfter times is
//     answered with an error instead of being computed again; a worker
//     stopped on purpose (a second stop signal) gives its unfinished jobs
//     back by publishing each anew with the count of its earlier
//     deliveries that counted (headers Ordplan-Deliveries-Counted,
//     Ordplan-Given-Back, sealed with the job by Ordplan-Give-Back-Seal)
//     and acknowledging the old message, so a give-back does not count
//     against these limits; the new message goes to the end of the queue,
//     behind the jobs already queued (a NAK would have the server deliver
//     it again first, but as one more delivery of the same message, which
//     counts against MaxDeliver and which a worker cannot tell from a
//     delivery to a worker killed while holding it);
//   - the key-value bucket ordplan-results, where a worker stores the reply
//     to job <index> of batch <batch> under the key <batch>.<index> with a
//     create-only write, so a second worker's reply is dropped; the bucket
//     keeps ResultHistory revisions of a key and the coordinator watches
//     them all in revision order, so the first valid revision wins even
//     when something overwrote it before the coordinator read it (a later
//     revision is logged and ignored);
//   - the object store ordplan-data, where data files are kept under the
//     hex SHA-256 of their bytes; workers copy them into a local cache and
//     check the hash before fitting (objects expire after DataTTL);
//   - the object store ordplan-replies, holding replies too large for one
//     message under reply.<batch>.<index>; the bucket entry then points
//     there.
//
// A batch is the set of fits of one outcome of a plan run (its id hashes the
// program version, the plan hash and the job list, data hash included), or
// one evaluation of a partitioned fit (its id hashes the model, the
// partitions, the parameters and the derivative order). Ids are content
// hashes, so a restarted coordinator finds the replies already stored,
// publishes only the jobs that have neither a reply nor a queued message,
// and collects the rest. A stored error reply is the answer of the run that
// got it, not a result: a later batch purges it and publishes the job again.
//
// Messages are gob-encoded: a Task on the jobs stream and a Reply in the
// bucket, each sealed with an HMAC-SHA256 made with the secret shared by
// the coordinator and the workers (auth.go); the give-back headers of a
// job carry their own HMAC of the counts, the subject and the job
// (giveBackSeal), so a process without the secret cannot change how many
// deliveries of a job count. Workers drop jobs without the seal or whose
// give-back headers do not match their seal, put back on the queue a job
// whose seal does not match their secret without spending its deliveries
// (the worker's secret may be the wrong one: Worker.refuse), and refuse
// jobs beyond their Limits. Workers send the coordinator notes on the jobs
// they hold (notes.go: progress, end, refusal) on
// ordplan.notes.<batch>.<index>: it says which worker fell silent on a job
// and who refused one, and stops a run whose jobs only refusing workers
// take. The coordinator discards, logs
// and publishes again the job of a reply that does not open or does not
// have the shape of an answer (validate.go), says what it waits for after
// WaitNotice without a reply (Client.workersNow: the workers' consumer),
// and never waits longer than twice the job deadline without a reply. Connect takes TLS files and NATS
// credentials (Config) and never shows a URL's password.
package queue
