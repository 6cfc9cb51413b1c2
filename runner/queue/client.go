package queue

import (
	"context"
	"fmt"
	"time"

	"github.com/nats-io/nats.go"
	"github.com/nats-io/nats.go/jetstream"
)

// Client is a connection to a JetStream server with the jobs stream, the
// results bucket and the data store opened (and created when missing).
type Client struct {
	nc      *nats.Conn
	ownConn bool
	js      jetstream.JetStream
	jobs    jetstream.Stream
	results jetstream.KeyValue
	data    jetstream.ObjectStore
}

// Connect dials the server at url (for example nats://127.0.0.1:4222) and
// opens the shared resources. name identifies the client to the server.
func Connect(ctx context.Context, url, name string) (*Client, error) {
	nc, err := nats.Connect(url, nats.Name(name), nats.Timeout(5*time.Second),
		nats.MaxReconnects(-1), nats.ReconnectWait(500*time.Millisecond))
	if err != nil {
		return nil, fmt.Errorf("queue %s: %v", url, err)
	}
	c, err := NewClient(ctx, nc)
	if err != nil {
		nc.Close()
		return nil, fmt.Errorf("queue %s: %v", url, err)
	}
	c.ownConn = true
	return c, nil
}

// NewClient opens the shared resources over an existing connection, which
// Close then leaves open.
func NewClient(ctx context.Context, nc *nats.Conn) (*Client, error) {
	js, err := jetstream.New(nc)
	if err != nil {
		return nil, err
	}
	c := &Client{nc: nc, js: js}
	c.jobs, err = js.CreateOrUpdateStream(ctx, jetstream.StreamConfig{
		Name:        JobStream,
		Description: "ordplan jobs: one message per fit or partition evaluation",
		Subjects:    []string{JobSubject + ".>"},
		Retention:   jetstream.WorkQueuePolicy,
		Storage:     jetstream.FileStorage,
	})
	if err != nil {
		return nil, fmt.Errorf("jobs stream %s: %w (is JetStream enabled on the server?)", JobStream, err)
	}
	c.results, err = js.CreateOrUpdateKeyValue(ctx, jetstream.KeyValueConfig{
		Bucket:      ResultBucket,
		Description: "ordplan replies by batch and job index",
		History:     1,
		TTL:         ResultTTL,
		Storage:     jetstream.FileStorage,
	})
	if err != nil {
		return nil, fmt.Errorf("results bucket %s: %w", ResultBucket, err)
	}
	c.data, err = js.CreateOrUpdateObjectStore(ctx, jetstream.ObjectStoreConfig{
		Bucket:      DataBucket,
		Description: "ordplan data files by SHA-256",
		Storage:     jetstream.FileStorage,
	})
	if err != nil {
		return nil, fmt.Errorf("data store %s: %w", DataBucket, err)
	}
	return c, nil
}

// Close flushes pending acknowledgements and closes the connection if the
// client opened it.
func (c *Client) Close() {
	if c.ownConn {
		c.nc.FlushTimeout(2 * time.Second)
		c.nc.Close()
	}
}
