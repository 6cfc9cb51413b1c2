// Package localserver starts a NATS server with JetStream inside the
// process, listening on the loopback interface only. Tests and the queue
// benchmark use it; production runs use a separately run server.
package localserver
