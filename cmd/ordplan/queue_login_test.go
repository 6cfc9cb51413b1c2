package main

import (
	"os"
	"path/filepath"
	"strings"
	"testing"
	"time"

	"ordplan/runner/queue"
	"ordplan/runner/queue/localserver"
)

// A queue server that asks for a user name and password is reached by a
// worker given --queue-login FILE and by a run given the same file through
// ORDPLAN_QUEUE_LOGIN; the run writes a local run's bytes, and no output,
// log line or run.json shows the password. A wrong password is refused in
// one line naming the login file (Q17), without the password.
func TestQueueLoginFile(t *testing.T) {
	plan, local, remote := localReference(t, "gss_grid")
	dir := t.TempDir()
	url := localserver.ForTestWith(t, localserver.Options{Logins: map[string]string{"ordplan": "hunter2-pw-s3cret"}})
	login, wrong := filepath.Join(dir, "queue.login"), filepath.Join(dir, "wrong.login")
	os.WriteFile(login, []byte("ordplan\nhunter2-pw-s3cret\n"), 0o600)
	os.WriteFile(wrong, []byte("ordplan\nhunter2-wrong\n"), 0o600)

	w := startProc(t, nil, "worker", "--queue", url, "--queue-login", login, "--name", "w1", "--jobs", "1", "--ack-wait", "2s", "--cache", t.TempDir())
	w.waitLog(t, 20*time.Second, "ready")
	t.Setenv(queue.EnvLogin, login)
	r := waitRun(t, runAsync("run", plan, "--out", remote, "--queue", url), 120*time.Second)
	sameOutputs(t, local, remote)
	shown := r[0] + r[1] + w.stderr.String()
	for _, f := range outputFiles {
		b, _ := os.ReadFile(filepath.Join(remote, f))
		shown += string(b)
	}
	if strings.Contains(shown, "hunter2") {
		t.Error("the password is shown in the outputs or the logs")
	}

	_, errs, code := runCLI("worker", "--queue", url, "--queue-login", wrong, "--cache", t.TempDir(), "--name", "w-wrong")
	want := "ordplan worker w-wrong: queue " + url + ": the server refused the credentials, those of the login file (--queue-login) " + wrong + ": check them against the server's authorization settings"
	if code != exitFail || !strings.Contains(errs, want) || strings.Count(strings.TrimSpace(errs), "\n") != 0 || strings.Contains(errs, "hunter2") {
		t.Errorf("a wrong password: exit %d:\n%s\nwant %s", code, errs, want)
	}
}
