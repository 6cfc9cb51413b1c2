package queue

import (
	"context"
	"crypto/sha256"
	"encoding/binary"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"hash"
	"io"
	"math"
	"strconv"

	"github.com/nats-io/nats.go/jetstream"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// PartitionRef is one partition of a data set too large for one node: a
// CSV file with the whole data's columns, known by the hash of its bytes.
// Like any data file it must hold at least two outcome categories (split
// rows at random or in turn rather than after sorting by the outcome).
type PartitionRef struct {
	Name string // for messages
	Hash string // hex SHA-256 of the file's bytes
	Path string // local copy, uploaded when the store lacks it ("": already stored)
}

// PartitionOptions control a partitioned fit.
type PartitionOptions struct {
	// Data says how workers read every partition. Categories defaults to the
	// whole data's categories: every partition must code the outcome alike,
	// even one that lacks a category.
	Data data.Options
	Fit  fit.Options
	Log  io.Writer // one line per Newton evaluation (nil: none)
}

// FitPartitioned fits model m on data held as partitions by workers: at
// each Newton evaluation it publishes one job per partition with the
// parameters and the derivative order, collects the partitions' sums and
// adds them in partition order, so the result does not depend on which
// worker answered first. The estimates equal a local fit of the whole data
// to rounding. Models with constrained predictors are refused.
func FitPartitioned(ctx context.Context, c *Client, parts []PartitionRef, whole fit.Whole, m fit.Model, opt PartitionOptions) (*fit.Result, error) {
	if len(parts) == 0 {
		return nil, errors.New("partitioned fit: no partitions")
	}
	dopt := opt.Data
	if dopt.Outcome == "" {
		return nil, errors.New("partitioned fit: the data options name no outcome column")
	}
	if len(dopt.Categories) == 0 && len(dopt.Codes) == 0 {
		// Integer codes: every partition reads them as the whole data's
		// codes, as numbers (a code written +2 or 02 is the category 2).
		for _, l := range whole.Categories {
			c, err := strconv.ParseInt(l, 10, 64)
			if err != nil || strconv.FormatInt(c, 10) != l {
				dopt.Codes = nil
				break
			}
			dopt.Codes = append(dopt.Codes, c)
		}
		if len(dopt.Codes) == 0 {
			dopt.Categories = whole.Categories
		}
	}
	if max(len(dopt.Categories), len(dopt.Codes)) != whole.J {
		return nil, fmt.Errorf("partitioned fit: the data options need the %d category labels of the whole data, in order", whole.J)
	}
	hashes := make([]string, len(parts))
	for i, p := range parts {
		if err := c.ensurePartition(ctx, p); err != nil {
			return nil, err
		}
		hashes[i] = p.Hash
	}
	key := sha256.New()
	fmt.Fprintf(key, "%s\n%s\npartitioned\n", formatVersion, runner.Version)
	enc := json.NewEncoder(key)
	for _, v := range []any{m, dopt, whole, hashes} {
		if err := enc.Encode(v); err != nil {
			return nil, err
		}
	}
	fitKey := key.Sum(nil)
	evals := 0
	eval := func(kind string, theta []float64, order int) ([]*Reply, error) {
		id := evalID(fitKey, kind, theta, order)
		tasks := make([]*Task, len(parts))
		for i, p := range parts {
			tasks[i] = &Task{Batch: id, Index: i, ID: p.Hash, Kind: kind, Part: &PartitionTask{
				Name: p.Name, DataHash: p.Hash, DataOptions: dopt, J: whole.J, Model: m,
				Theta: append([]float64(nil), theta...), Order: order}}
		}
		replies, _, err := c.runBatch(ctx, id, tasks, batchHooks{})
		if err != nil {
			return nil, fmt.Errorf("partitioned fit %s: %v", m.Name(), err)
		}
		evals++
		if opt.Log != nil {
			fmt.Fprintf(opt.Log, "queue: %s: evaluation %d (%s, order %d) over %d partitions\n", m.Name(), evals, kind, order, len(parts))
		}
		for _, r := range replies {
			if r.Err != "" {
				return nil, errors.New(r.Err)
			}
		}
		return replies, nil
	}
	sums := func(theta []float64, order int) (*fit.Sums, error) {
		replies, err := eval(KindSums, theta, order)
		if err != nil {
			return nil, err
		}
		total := &fit.Sums{}
		for i, r := range replies {
			if r.Sums == nil {
				return nil, fmt.Errorf("partition %s: the worker %s returned no sums", parts[i].Name, r.Worker)
			}
			total.Add(r.Sums)
		}
		return total, nil
	}
	diag := func(theta []float64) (int, float64, error) {
		replies, err := eval(KindDiag, theta, 0)
		if err != nil {
			return 0, 0, err
		}
		neg, minP := 0, math.Inf(1)
		for _, r := range replies {
			neg += r.Negative
			minP = math.Min(minP, r.MinProb)
		}
		return neg, minP, nil
	}
	return fit.FitFromSums(whole, m, sums, diag, opt.Fit)
}

// evalID names one evaluation by its content: the fit, the kind, the order
// and the exact bits of the parameters.
func evalID(fitKey []byte, kind string, theta []float64, order int) string {
	h := sha256.New()
	h.Write(fitKey)
	fmt.Fprintf(h, "\n%s\n%d\n", kind, order)
	writeFloats(h, theta)
	return hex.EncodeToString(h.Sum(nil))
}

func writeFloats(h hash.Hash, v []float64) {
	var b [8]byte
	for _, x := range v {
		binary.LittleEndian.PutUint64(b[:], math.Float64bits(x))
		h.Write(b[:])
	}
}

// ensurePartition puts a partition's file in the data store, or checks that
// the store has it when there is no local copy.
func (c *Client) ensurePartition(ctx context.Context, p PartitionRef) error {
	if p.Path != "" {
		if err := c.PutData(ctx, p.Path, p.Hash); err != nil {
			return fmt.Errorf("partition %s: %v", p.Name, err)
		}
		return nil
	}
	if _, err := c.data.GetInfo(ctx, p.Hash); err != nil {
		if errors.Is(err, jetstream.ErrObjectNotFound) {
			return fmt.Errorf("partition %s: sha256 %s is not in the data store and no local file was given", p.Name, p.Hash)
		}
		return fmt.Errorf("partition %s: data store: %v", p.Name, err)
	}
	return nil
}
