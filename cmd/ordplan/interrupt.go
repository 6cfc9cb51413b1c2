package main

import (
	"fmt"
	"io"
	"os"
	"os/signal"
	"sync"
	"syscall"
	"time"
)

// folderStage is where a command holding an output folder stands, which
// decides what an interrupt does and what its message says the folder
// holds.
type folderStage int

const (
	beforeWrite folderStage = iota // the folder holds what it held when claimed
	committing                     // the outputs are being written (held)
	written                        // the folder holds this run's complete outputs
	writeFailed                    // the write failed; its error says what the folder holds
)

// stopSignals are the signals that stop a command the way Ctrl-C does:
// SIGINT, SIGTERM and SIGHUP (the terminal closed). A signal the process
// was started with ignored (SIGHUP under nohup, SIGINT of a background
// job) stays ignored: catching it would undo that. Never empty (the
// signal package would take an empty list for every signal): SIGTERM
// is always among them.
func stopSignals() []os.Signal {
	var out []os.Signal
	for _, s := range []os.Signal{os.Interrupt, syscall.SIGTERM, syscall.SIGHUP} {
		if s == syscall.SIGTERM || !signal.Ignored(s) {
			out = append(out, s)
		}
	}
	return out
}

// interruptWatch catches the interrupts (Ctrl-C, SIGINT; SIGTERM; SIGHUP) that
// reach a command while it holds an output folder (from claimOutput to
// Unlock). Before and after the write the command stops at once with one
// line on stderr saying what the folder holds; during the write (commit)
// the interrupt is held until the folder is complete, then stops the
// command with that line. A write that fails holds it until Unlock, so
// that the failure is reported first.
type interruptWatch struct {
	command, dir string
	hadRecord    bool // the folder held an earlier run's outputs (a run.json) when claimed
	stderr       io.Writer
	release      func() // releases the folder's lock, leaving nothing of it (outputLock.removeLock)
	madeFolder   bool   // the command made the folder (release removes it while empty)

	signals chan os.Signal
	ended   chan struct{}
	done    sync.WaitGroup

	mu      sync.Mutex
	stage   folderStage
	pending os.Signal // an interrupt held during the write
	// progress, when set (outputLock.progress), is silenced before the
	// interrupt's line is written, so that the line is the command's
	// last: the fits go on while the lock is released.
	progress *progress
}

// stopOnInterrupt ends the process as the interrupt s would have, had it
// not been caught: by the signal itself where the system delivers it to
// the process (so that a shell sees an interrupted command), else with
// exit code 128 + its number. Tests replace it.
var stopOnInterrupt = func(s os.Signal) {
	signal.Reset(s)
	if p, err := os.FindProcess(os.Getpid()); err == nil && p.Signal(s) == nil {
		time.Sleep(time.Second)
	}
	os.Exit(signalExit(s))
}

// watchInterrupts starts the watch for command (run, rehearse, power)
// over the output folder dir; hadRecord tells whether dir held an earlier
// run's outputs; release, called before an interrupt stops the command,
// releases the folder's lock.
func watchInterrupts(command, dir string, hadRecord bool, stderr io.Writer, release func()) *interruptWatch {
	w := &interruptWatch{command: command, dir: dir, hadRecord: hadRecord, stderr: stderr, release: release,
		signals: make(chan os.Signal, 1), ended: make(chan struct{})}
	signal.Notify(w.signals, stopSignals()...)
	w.done.Add(1)
	go w.watch()
	return w
}

func (w *interruptWatch) watch() {
	defer w.done.Done()
	for {
		select {
		case s := <-w.signals:
			w.mu.Lock()
			if w.stage == committing || w.stage == writeFailed {
				if w.pending == nil {
					w.pending = s
				}
			} else {
				w.stop(s)
			}
			w.mu.Unlock()
		case <-w.ended:
			return
		}
	}
}

// stop says what the folder holds and ends the command (stopOnInterrupt).
// The caller holds w.mu, so that the stage cannot change meanwhile.
func (w *interruptWatch) stop(s os.Signal) {
	w.progress.mute()
	fmt.Fprintln(w.stderr, w.message(s))
	if w.release != nil {
		w.release()
	}
	stopOnInterrupt(s)
}

// message is the line an interrupt leaves on stderr at the current stage.
func (w *interruptWatch) message(s os.Signal) string {
	lead := "\n" // ends a progress line rewritten in place on a terminal
	if w.stderr != io.Writer(os.Stderr) || !isTerminal(os.Stderr) {
		lead = ""
	}
	what := "interrupted"
	switch s {
	case syscall.SIGTERM:
		what = "stopped (SIGTERM)"
	case syscall.SIGHUP:
		what = "stopped (SIGHUP: its terminal was closed)"
	}
	head := lead + "ordplan " + w.command + ": " + what
	switch w.stage {
	case beforeWrite:
		if w.hadRecord {
			return fmt.Sprintf("%s before writing its outputs; output folder %s: unchanged, it holds the earlier run's outputs as they were", head, w.dir)
		}
		if w.madeFolder {
			return fmt.Sprintf("%s before writing its outputs; output folder %s: no output was written, and the folder, which it made, is removed again", head, w.dir)
		}
		return fmt.Sprintf("%s before writing its outputs; output folder %s: no output was written there", head, w.dir)
	case writeFailed:
		return head + " after the failure above"
	}
	if w.pending != nil {
		return fmt.Sprintf("%s while writing its outputs, and stopped once they were all in place; output folder %s: this run's complete outputs, as its run.json lists them", head, w.dir)
	}
	return fmt.Sprintf("%s after writing its outputs; output folder %s: this run's complete outputs, as its run.json lists them", head, w.dir)
}

// commit runs write, the whole change of the output folder (the new files
// renamed into place and the earlier run's outdated outputs removed), with
// interrupts held: one that arrives meanwhile stops the command only once
// write has returned, so that the folder is never left half changed (nor
// with temporary files in it).
func (l *outputLock) commit(write func() error) error {
	if l == nil || l.w == nil { // a bare lockOutput (tests)
		return write()
	}
	w := l.w
	w.mu.Lock()
	w.stage = committing
	w.mu.Unlock()
	err := write()
	w.mu.Lock()
	defer w.mu.Unlock()
	if err != nil {
		w.stage = writeFailed
		return err
	}
	if w.pending != nil {
		w.stop(w.pending)
	}
	w.stage = written
	return nil
}

// end stops the watch; an interrupt held since a failed write then stops
// the command (its error already reported).
func (w *interruptWatch) end() {
	signal.Stop(w.signals)
	close(w.ended)
	w.done.Wait()
	w.mu.Lock()
	defer w.mu.Unlock()
	if w.pending != nil {
		w.stop(w.pending)
	}
}

// progress is the progress report of the command holding the folder, on
// stderr (stderrProgress), silenced when an interrupt stops the command
// (interruptWatch.stop).
func (l *outputLock) progress(stderr io.Writer) *progress {
	p := stderrProgress(stderr)
	if l.w != nil {
		l.w.mu.Lock()
		l.w.progress = p
		l.w.mu.Unlock()
	}
	return p
}
