package main

import (
	"context"
	"errors"
	"fmt"
	"os"
	"os/exec"
	"path/filepath"
	"syscall"
	"time"

	"ordplan/plan"
	"ordplan/runner"
	"ordplan/runner/queue"
	"ordplan/runner/queue/localserver"
)

// queueRun runs the plan through a fresh server and n fresh worker
// processes; the clock runs from the plan run's start to its end.
func queueRun(p *plan.Plan, bin, tmp string, n int, ref map[string][]byte) (sample, error) {
	dir, err := os.MkdirTemp(tmp, "run")
	if err != nil {
		return sample{}, err
	}
	defer os.RemoveAll(dir)
	srv, err := localserver.Start(filepath.Join(dir, "store"))
	if err != nil {
		return sample{}, err
	}
	defer func() {
		srv.Shutdown()
		srv.WaitForShutdown()
	}()
	url := srv.ClientURL()
	ctx, cancel := context.WithTimeout(context.Background(), 10*time.Minute)
	defer cancel()
	secret := []byte("ordplan bench: a throwaway shared secret")
	secretFile := filepath.Join(dir, "queue.key")
	if err := os.WriteFile(secretFile, secret, 0o600); err != nil {
		return sample{}, err
	}
	c, err := queue.Connect(ctx, queue.Config{URL: url, Name: "ordplan bench", Secret: secret})
	if err != nil {
		return sample{}, err
	}
	defer c.Close()
	logs := &queue.LogBuffer{}
	var procs []*exec.Cmd
	for i := range n {
		cmd := exec.Command(bin, "worker", "--queue", url, "--jobs", "1", "--name", fmt.Sprintf("w%d", i+1),
			"--cache", filepath.Join(dir, fmt.Sprintf("cache%d", i+1)))
		cmd.Stderr = logs
		cmd.Env = append(os.Environ(), queue.EnvSecretFile+"="+secretFile)
		if err := cmd.Start(); err != nil {
			return sample{}, err
		}
		procs = append(procs, cmd)
	}
	defer func() { stopAll(procs) }()
	deadline := time.Now().Add(30 * time.Second)
	for logs.Count("ready") < n {
		if time.Now().After(deadline) {
			return sample{}, errors.New("the workers did not start within 30 s")
		}
		time.Sleep(10 * time.Millisecond)
	}
	co := queue.NewCoordinator(ctx, c, p.Hash, nil)
	if _, err := co.AddData(p.Data.Path); err != nil {
		return sample{}, err
	}
	ex := &timed{inner: co}
	start := time.Now()
	files, err := outputs(p, runner.Options{Executor: ex})
	if err == nil {
		err = co.Err()
	}
	if err != nil {
		return sample{}, err
	}
	return sample{fits: ex.fits, fitTime: ex.took, runTime: time.Since(start), sameFile: equalFiles(files, ref)}, nil
}

// stopAll asks the workers to finish and kills those that do not.
func stopAll(procs []*exec.Cmd) {
	for _, p := range procs {
		p.Process.Signal(syscall.SIGTERM)
	}
	for _, p := range procs {
		done := make(chan struct{})
		go func() {
			p.Wait()
			close(done)
		}()
		select {
		case <-done:
		case <-time.After(10 * time.Second):
			p.Process.Kill()
			<-done
		}
	}
}
