package queue

import (
	"context"
	"errors"
	"fmt"
	"math"
)

// maxErrText bounds the error text of a reply.
const maxErrText = 64 << 10

// openReply checks a results entry stored under key and decodes its reply,
// fetching it from the replies store when the entry points there.
func (c *Client) openReply(ctx context.Context, key string, value []byte) (*Reply, error) {
	kind, payload, err := open(c.secret, key, value)
	if err != nil {
		return nil, err
	}
	if kind == sealRef {
		var ref objectRef
		if err := decode(payload, &ref); err != nil {
			return nil, fmt.Errorf("undecodable pointer to the replies store: %v", err)
		}
		if ref.Object != replyObject(key) || ref.Size < 0 || ref.Size > MaxReplyBytes {
			return nil, fmt.Errorf("a pointer to object %q of %d bytes", ref.Object, ref.Size)
		}
		info, err := c.replies.GetInfo(ctx, ref.Object)
		if err != nil {
			return nil, fmt.Errorf("the reply in the replies store: %v", err)
		}
		if info.Size != uint64(ref.Size) {
			return nil, fmt.Errorf("the replies store holds %d bytes where the pointer says %d", info.Size, ref.Size)
		}
		b, err := c.replies.GetBytes(ctx, ref.Object)
		if err != nil {
			return nil, fmt.Errorf("the reply in the replies store: %v", err)
		}
		if kind, payload, err = open(c.secret, key, b); err != nil {
			return nil, fmt.Errorf("the reply in the replies store is %v", err)
		}
	}
	if kind != sealReply {
		return nil, fmt.Errorf("an entry of kind %q where a reply belongs", kind)
	}
	var r Reply
	if err := decode(payload, &r); err != nil {
		return nil, fmt.Errorf("undecodable reply: %v", err)
	}
	return &r, nil
}

// checkReply checks that a reply answers task t and has the shape its kind
// needs, so that nothing downstream indexes past a vector's end or prints a
// number that is not one.
func checkReply(t *Task, r *Reply) error {
	if r.Batch != t.Batch || r.Index != t.Index || r.ID != t.ID {
		return fmt.Errorf("the reply is for job %.12s/%d (%s), not %.12s/%d (%s)", r.Batch, r.Index, r.ID, t.Batch, t.Index, t.ID)
	}
	if r.Err != "" {
		if r.Result != nil || r.Sums != nil || r.Scores != nil {
			return errors.New("an error reply that also carries a result")
		}
		if len(r.Err) > maxErrText {
			return fmt.Errorf("an error text of %d bytes", len(r.Err))
		}
		return nil
	}
	switch t.Kind {
	case KindFit:
		if r.Result == nil || r.Sums != nil {
			return errors.New(`an "ok" reply without a fit result`)
		}
		m, err := t.Fit.Spec.Model()
		if err != nil {
			return err
		}
		if err := r.Result.CheckShape(m, t.Fit.Spec.Predictors); err != nil {
			return fmt.Errorf("the fit result is malformed: %v", err)
		}
	case KindSums:
		if r.Sums == nil || r.Result != nil {
			return errors.New(`an "ok" reply without partition sums`)
		}
		if err := r.Sums.CheckShape(len(t.Part.Theta), t.Part.Order); err != nil {
			return fmt.Errorf("the partition sums are malformed: %v", err)
		}
	case KindDiag:
		// A part that keeps no row (a subset or missing values may
		// empty one) has no smallest probability: +Inf, the identity of
		// the minimum taken over the parts.
		if r.Result != nil || r.Sums != nil || r.Negative < 0 || math.IsNaN(r.MinProb) || r.MinProb > 1 && !math.IsInf(r.MinProb, 1) {
			return fmt.Errorf("malformed diagnostics (%d negative rows, smallest probability %g)", r.Negative, r.MinProb)
		}
	case KindScores:
		if r.Scores == nil || r.Result != nil || r.Sums != nil {
			return errors.New(`an "ok" reply without the partition's answer`)
		}
		if err := r.Scores.CheckShape(t.Part.Score, t.Part.J); err != nil {
			return fmt.Errorf("the partition's answer is malformed: %v", err)
		}
	default:
		return fmt.Errorf("a reply to a job of unknown kind %q", t.Kind)
	}
	return nil
}
