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

	"github.com/nats-io/nats.go/jetstream"

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
	pr, err := newPartRun(ctx, c, parts, whole, m, opt)
	if err != nil {
		return nil, err
	}
	return fit.FitFromSums(whole, m, pr.sums(m, nil), pr.diag(m, nil), opt.Fit)
}

// LipsitzPartitioned is the Lipsitz test of fit r, made by FitPartitioned
// over the same partitions, with the same options: the workers score
// their partitions' rows, count them by ranges of scores and sum the
// calibration table by the groups cut from those counts, and the model
// with the group indicators is fitted over the partitions as r was
// (fit.LipsitzOverParts). The groups are those of fit.LipsitzTest on the
// whole data in one place.
func LipsitzPartitioned(ctx context.Context, c *Client, parts []PartitionRef, whole fit.Whole, r *fit.Result, opt PartitionOptions) (*fit.Lipsitz, error) {
	pr, err := newPartRun(ctx, c, parts, whole, r.Model, opt)
	if err != nil {
		return nil, err
	}
	return fit.LipsitzOverParts(r, whole, pr, 0, opt.Fit)
}

// partRun asks the partitions of one fit's data: one job per partition,
// the replies in partition order.
type partRun struct {
	ctx   context.Context
	c     *Client
	parts []PartitionRef
	whole fit.Whole
	dopt  data.Options
	key   []byte // names the fit: model, data options, whole, partitions
	log   io.Writer
	evals int
}

// newPartRun checks the partitions of a fit of m, puts them in the data
// store and settles how every partition reads the outcome.
func newPartRun(ctx context.Context, c *Client, parts []PartitionRef, whole fit.Whole, m fit.Model, opt PartitionOptions) (*partRun, error) {
	if len(parts) == 0 {
		return nil, errors.New("partitioned fit: no partitions")
	}
	if opt.Data.Outcome == "" {
		return nil, errors.New("partitioned fit: the data options name no outcome column")
	}
	dopt, err := opt.Data.CodedAs(whole.Categories)
	if err == nil && len(whole.Categories) != whole.J {
		err = fmt.Errorf("the data options need the %d category labels of the whole data, in order", whole.J)
	}
	if err != nil {
		return nil, fmt.Errorf("partitioned fit: %w", err)
	}
	hashes := make([]string, len(parts))
	for i, p := range parts {
		if err := c.ensurePartition(ctx, p); err != nil {
			return nil, err
		}
		hashes[i] = p.Hash
	}
	key, err := contentKey(nil, "partitioned", m, dopt, whole, hashes)
	if err != nil {
		return nil, err
	}
	return &partRun{ctx: ctx, c: c, parts: parts, whole: whole, dopt: dopt, key: key, log: opt.Log}, nil
}

// contentKey names what follows parent by the JSON of vs.
func contentKey(parent []byte, what string, vs ...any) ([]byte, error) {
	key := sha256.New()
	if parent == nil {
		fmt.Fprintf(key, "%s\n%s\n%s\n", formatVersion, Build(), what)
	} else {
		fmt.Fprintf(key, "%x\n%s\n", parent, what)
	}
	enc := json.NewEncoder(key)
	for _, v := range vs {
		if err := enc.Encode(v); err != nil {
			return nil, err
		}
	}
	return key.Sum(nil), nil
}

// eval publishes the job of each partition for one question (id names it
// by its content) and returns the replies in partition order.
func (pr *partRun) eval(kind, id, what, detail string, task func(p PartitionRef) *PartitionTask) ([]*Reply, error) {
	tasks := make([]*Task, len(pr.parts))
	for i, p := range pr.parts {
		pt := task(p)
		pt.Name, pt.DataHash, pt.DataOptions, pt.J = p.Name, p.Hash, pr.dopt, pr.whole.J
		tasks[i] = &Task{Batch: id, Index: i, ID: p.Hash, Kind: kind, Part: pt}
	}
	replies, _, err := pr.c.runBatch(pr.ctx, id, tasks, batchHooks{})
	if err != nil {
		return nil, fmt.Errorf("partitioned fit %s: %v", what, err)
	}
	pr.evals++
	if pr.log != nil {
		fmt.Fprintf(pr.log, "queue: %s: evaluation %d (%s) over %d partitions\n", what, pr.evals, detail, len(pr.parts))
	}
	for _, r := range replies {
		if r.Fault {
			return nil, &FaultError{Job: "partition " + r.ID, Worker: r.Worker, Text: r.Err}
		}
		if r.Err != "" {
			return nil, errors.New(r.Err)
		}
	}
	return replies, nil
}

// sums sums model m's log-likelihood and derivatives over the partitions,
// their rows with the group indicators of cut when it is set.
func (pr *partRun) sums(m fit.Model, cut *fit.ScoreQuery) func(theta []float64, order int) (*fit.Sums, error) {
	key, err := pr.cutKey(m, cut)
	return func(theta []float64, order int) (*fit.Sums, error) {
		if err != nil {
			return nil, err
		}
		replies, err := pr.eval(KindSums, evalID(key, KindSums, theta, order), m.Name(), fmt.Sprintf("%s, order %d", KindSums, order), func(PartitionRef) *PartitionTask {
			return &PartitionTask{Model: m, Theta: append([]float64(nil), theta...), Order: order, Score: cut, Shift: pr.whole.Shift}
		})
		if err != nil {
			return nil, err
		}
		total := &fit.Sums{}
		for i, r := range replies {
			if r.Sums == nil {
				return nil, fmt.Errorf("partition %s: the worker %s returned no sums", pr.parts[i].Name, r.Worker)
			}
			total.Add(r.Sums)
		}
		return total, nil
	}
}

// diag is the fitted-probability diagnostics of model m over the
// partitions (with cut as for sums).
func (pr *partRun) diag(m fit.Model, cut *fit.ScoreQuery) func(theta []float64) (int, float64, error) {
	key, err := pr.cutKey(m, cut)
	return func(theta []float64) (int, float64, error) {
		if err != nil {
			return 0, 0, err
		}
		replies, err := pr.eval(KindDiag, evalID(key, KindDiag, theta, 0), m.Name(), KindDiag+", order 0", func(PartitionRef) *PartitionTask {
			return &PartitionTask{Model: m, Theta: append([]float64(nil), theta...), Score: cut, Shift: pr.whole.Shift}
		})
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
}

// cutKey names the fit of model m over the partitions with cut's group
// indicators (the fit's own key without a cut).
func (pr *partRun) cutKey(m fit.Model, cut *fit.ScoreQuery) ([]byte, error) {
	if cut == nil {
		return pr.key, nil
	}
	return contentKey(pr.key, "lipsitz refit", m, cut)
}

// Ask, Sums and Diag answer the questions of fit.LipsitzOverParts.
func (pr *partRun) Ask(q *fit.ScoreQuery) ([]*fit.ScoreAnswer, error) {
	key, err := contentKey(pr.key, "scores", q)
	if err != nil {
		return nil, err
	}
	replies, err := pr.eval(KindScores, evalID(key, KindScores, nil, 0), q.Model.Name(), "Lipsitz test: "+KindScores+" "+string(q.Step), func(PartitionRef) *PartitionTask {
		return &PartitionTask{Model: q.Model, Theta: q.Estimates, Score: q}
	})
	if err != nil {
		return nil, err
	}
	out := make([]*fit.ScoreAnswer, len(replies))
	for i, r := range replies {
		out[i] = r.Scores
	}
	return out, nil
}

func (pr *partRun) Sums(cut *fit.ScoreQuery, m fit.Model, theta []float64, order int) (*fit.Sums, error) {
	return pr.sums(m, cut)(theta, order)
}

func (pr *partRun) Diag(cut *fit.ScoreQuery, m fit.Model, theta []float64) (int, float64, error) {
	return pr.diag(m, cut)(theta)
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
