package queue

import (
	"context"
	"encoding/json"
	"fmt"
	"math"
	"os"
	"runtime/debug"
	"strconv"
	"sync"

	"ordplan/runner"
	"ordplan/runner/data"
	"ordplan/runner/fit"
)

// compute runs one task. Every failure, a panic included, becomes the
// reply's error text; every failure but the fit's own (a model the data
// cannot give, a fit or evaluation that fails as it would on any machine)
// is a fault of the worker (Reply.Fault).
func (w *Worker) compute(ctx context.Context, t *Task) (r *Reply) {
	r = &Reply{Batch: t.Batch, Index: t.Index, ID: t.ID}
	defer func() {
		if p := recover(); p != nil {
			w.logf("%s: panic: %v\n%s", t.jobName(), p, debug.Stack())
			r = &Reply{Batch: t.Batch, Index: t.Index, ID: t.ID, Fault: true, Err: fmt.Sprintf("%s: internal error on worker %s: %v", t.ID, w.Name, p)}
		}
	}()
	fault := func(err error) *Reply {
		return &Reply{Batch: t.Batch, Index: t.Index, ID: t.ID, Fault: true, Err: err.Error()}
	}
	if err := w.Limits.check(t); err != nil {
		return fault(err)
	}
	switch t.Kind {
	case KindFit:
		if t.Fit == nil {
			return fault(fmt.Errorf("job %s carries no fit", t.ID))
		}
		path, err := w.cache.path(ctx, w.Client.data, t.Fit.DataHash, t.Fit.DataFile, w.Limits.DataBytes)
		if err != nil {
			return fault(err)
		}
		// The coordinator read these bytes (their hash is checked) with
		// these options: a failure to read them here is the worker's.
		ds, err := data.LoadFiles([]string{path}, t.Fit.DataOptions)
		if err != nil {
			return fault(err)
		}
		r.Result, err = runner.ExecuteJobOn(ds, *t.Fit)
		if err != nil {
			r.Result, r.Err = nil, err.Error()
		}
		return r
	case KindSums, KindDiag, KindScores:
		if t.Part == nil || t.Kind == KindScores && t.Part.Score == nil {
			return fault(fmt.Errorf("job %s carries no partition or no question", t.ID))
		}
		d, err := w.partition(ctx, t.Part, t.Kind != KindScores)
		if err != nil {
			return fault(err)
		}
		switch t.Kind {
		case KindSums:
			r.Sums, err = fit.PartitionSums(d, t.Part.Model, t.Part.Theta, t.Part.Order)
		case KindDiag:
			r.Negative, r.MinProb, err = fit.PartitionDiagnostics(d, t.Part.Model, t.Part.Theta)
		default:
			r.Scores, err = t.Part.Score.Answer(d)
		}
		if err != nil {
			r.Result, r.Sums, r.Scores = nil, nil, nil
			r.Err = fmt.Sprintf("partition %s: %v", t.Part.Name, err)
		}
		return r
	default:
		return fault(fmt.Errorf("job %s: unknown kind %q", t.ID, t.Kind))
	}
}

// partition returns the fit data of a partition, loaded once per worker;
// with rows (the rows of sums and diagnostics), its rows with the group
// indicators of the task's cut when Score is set, and centred by the
// task's Shift when it is set, made once per worker too (the scores of
// KindScores are of the rows as read).
func (w *Worker) partition(ctx context.Context, p *PartitionTask, rows bool) (*fit.Data, error) {
	path, err := w.cache.path(ctx, w.Client.data, p.DataHash, p.Name, w.Limits.DataBytes)
	if err != nil {
		return nil, err
	}
	opts, err := json.Marshal(p.DataOptions)
	if err != nil {
		return nil, err
	}
	key := p.DataHash + "\n" + string(opts)
	derived := key
	if rows && p.Score != nil {
		q, err := json.Marshal(p.Score)
		if err != nil {
			return nil, err
		}
		derived += "\n" + string(q)
	}
	if rows && len(p.Shift) > 0 {
		derived += "\nshift"
		for _, v := range p.Shift {
			derived += " " + strconv.FormatUint(math.Float64bits(v), 16)
		}
	}
	if d, ok := w.parts.lookup(derived); ok {
		return d, nil
	}
	d, err := w.parts.get(key, func() (*fit.Data, error) {
		f, err := os.Open(path)
		if err != nil {
			return nil, fmt.Errorf("partition %s: %v", p.Name, err)
		}
		defer f.Close()
		o := p.DataOptions
		o.Part = true // its subset values were judged on all parts (PartitionFiles)
		ds, err := data.Read(f, p.Name, o)
		if err != nil {
			return nil, fmt.Errorf("partition %w", err)
		}
		if len(ds.Categories) != p.J {
			return nil, fmt.Errorf("partition %s has %d outcome categories, the whole data %d: give the categories in the data options", p.Name, len(ds.Categories), p.J)
		}
		return runner.FitData(ds), nil
	})
	if err != nil || derived == key {
		return d, err
	}
	return w.parts.get(derived, func() (*fit.Data, error) {
		if rows && p.Score != nil {
			if d, err = p.Score.Indicators(d); err != nil {
				return nil, err
			}
		}
		if rows && len(p.Shift) > 0 {
			return d.Centred(p.Shift)
		}
		return d, nil
	})
}

// partitionCache keeps the last few loaded partitions.
type partitionCache struct {
	mu    sync.Mutex
	size  int
	keys  []string // oldest first
	items map[string]*fit.Data
}

func newPartitionCache(size int) *partitionCache {
	return &partitionCache{size: size, items: map[string]*fit.Data{}}
}

// lookup is the item under key, if the cache holds it.
func (pc *partitionCache) lookup(key string) (*fit.Data, bool) {
	pc.mu.Lock()
	defer pc.mu.Unlock()
	d, ok := pc.items[key]
	return d, ok
}

func (pc *partitionCache) get(key string, load func() (*fit.Data, error)) (*fit.Data, error) {
	pc.mu.Lock()
	defer pc.mu.Unlock()
	if d, ok := pc.items[key]; ok {
		return d, nil
	}
	d, err := load()
	if err != nil {
		return nil, err
	}
	if len(pc.keys) == pc.size {
		delete(pc.items, pc.keys[0])
		pc.keys = pc.keys[1:]
	}
	pc.keys = append(pc.keys, key)
	pc.items[key] = d
	return d, nil
}
