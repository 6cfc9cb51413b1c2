package main

import (
	"fmt"
	"io"
	"ordplan/plan"
	"os"
	"strings"
	"sync"
	"time"
)

// progress reports the fits of a run on standard error: on a terminal one
// live line (fits done of the total, time elapsed, an estimate of the time
// left) rewritten in place; otherwise a plain line every few seconds and
// one at the end of each outcome's grid, so logs stay short.
type progress struct {
	w     io.Writer
	live  bool
	now   func() time.Time
	every time.Duration // plain lines: at most one per this long

	mu      sync.Mutex
	outcome string
	start   time.Time // of the current outcome's grid
	prev    time.Time // of the last step heard
	last    time.Time // last plain line
	width   int       // of the last live line
	muted   bool      // an interrupt's line was written: no line after it
}

// mute stops the report: a step after it writes nothing. A step being
// written when it is called is written first. A nil report is left as it
// is.
func (p *progress) mute() {
	if p == nil {
		return
	}
	p.mu.Lock()
	p.muted = true
	p.mu.Unlock()
}

// stderrProgress reports on stderr: a live line when it is the process's
// standard error on a terminal, plain lines otherwise.
func stderrProgress(stderr io.Writer) *progress {
	return newProgress(stderr, stderr == io.Writer(os.Stderr) && isTerminal(os.Stderr), time.Now)
}

func newProgress(w io.Writer, live bool, now func() time.Time) *progress {
	t := now()
	return &progress{w: w, live: live, now: now, every: 5 * time.Second, start: t, prev: t, last: t}
}

// Fitted implements runner.Progress.
func (p *progress) Fitted(outcome, id string, done, total int) { p.step(outcome, "fits", done, total) }

// Replicated implements simulate.Progress: the replicates of size n of a
// power study finished so far.
func (p *progress) Replicated(n, done, total int) {
	p.step(fmt.Sprintf("n = %d", n), "replicates", done, total)
}

// resampled reports selection_stability's repetitions finished so far
// (runner.Options.Resampled): bootstrap resamples, or sets simulated from
// the chosen model (draw: chosen_model).
func (p *progress) resampled(pl *plan.Plan) func(done, total int) {
	what := stabilityWhat(pl)
	return func(done, total int) { p.step("selection stability", what, done, total) }
}

// stabilityWhat names selection_stability's repetitions: bootstrap
// resamples, or sets simulated from the chosen model (draw: chosen_model).
func stabilityWhat(pl *plan.Plan) string {
	if pl.SelectionStability != nil && pl.SelectionStability.Draw == plan.StabilityChosenModel {
		return "sets simulated from the chosen model"
	}
	return "bootstrap resamples"
}

// stabilityLocalNote is the line ordplan run --queue prints for a plan with
// selection_stability: its repetitions are fitted by this process, not by
// the queue's workers, so that a user watching idle workers knows why.
func stabilityLocalNote(pl *plan.Plan) string {
	return fmt.Sprintf("selection stability: its %d %s are fitted on this machine (as many at once as --workers allows), not sent to the queue's workers", pl.SelectionStability.Resamples, stabilityWhat(pl))
}

// Imputed implements runner.ImputationProgress: the imputed sets of an
// outcome made so far.
func (p *progress) Imputed(outcome string, done, total int) {
	p.step(outcome+", imputation", "imputed sets", done, total)
}

// step shows done of total things of a stage (an outcome's fits or
// imputed sets).
func (p *progress) step(outcome, things string, done, total int) {
	p.mu.Lock()
	defer p.mu.Unlock()
	if p.muted {
		return
	}
	t := p.now()
	if outcome != p.outcome {
		// A new stage began when the one before ended: its first step's
		// time counts.
		p.start, p.outcome = p.prev, outcome
	}
	p.prev = t
	elapsed := t.Sub(p.start)
	line := fmt.Sprintf("%s: %d of %d %s, %s elapsed", outcome, done, total, things, roundDur(elapsed))
	if done < total && done > 0 {
		left := time.Duration(float64(elapsed) * float64(total-done) / float64(done))
		line += ", about " + roundDur(left) + " left"
	}
	if p.live {
		pad := ""
		if n := p.width - len(line); n > 0 {
			pad = strings.Repeat(" ", n)
		}
		fmt.Fprintf(p.w, "\r%s%s", line, pad)
		p.width = len(line)
		if done == total {
			fmt.Fprintln(p.w)
			p.width = 0
		}
		return
	}
	if done == total || t.Sub(p.last) >= p.every {
		fmt.Fprintln(p.w, line)
		p.last = t
	}
}

// roundDur writes a duration to the second (to the tenth below ten seconds).
func roundDur(d time.Duration) string {
	if d < 10*time.Second {
		return d.Round(100 * time.Millisecond).String()
	}
	return d.Round(time.Second).String()
}
