// Command queue measures the throughput of a plan of 100 fits run through
// the NATS JetStream queue with 1, 2 and 4 worker processes, against the
// same fits run in this process. The JetStream server is embedded and
// listens on 127.0.0.1 only; each measurement gets a fresh server (so no
// result is reused) and fresh workers, started before the clock starts.
// The setups take turns, so a load that comes and goes on the machine
// touches them alike.
// Every run's report files are compared with the local run's. Nothing is
// asserted; the table goes to stdout.
//
//	go run ./bench/queue                       # from the repository root
//	go run ./bench/queue -workers 1,2 -repeat 1
package main
