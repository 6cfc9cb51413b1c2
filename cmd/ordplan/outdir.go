package main

import (
	"crypto/sha256"
	"encoding/hex"
	"encoding/json"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"regexp"
	"slices"
	"sort"
	"strconv"
	"strings"
	"sync"
	"syscall"

	"ordplan/internal/words"
	"ordplan/runner"
)

// lockFile is the lock a run holds in its output folder.
const lockFile = ".ordplan.lock"

// outputLock is a held lock on an output folder, with the watch on
// interrupts that claimOutput starts (nil for a bare lockOutput).
type outputLock struct {
	f *os.File
	w *interruptWatch
	// path is the lock file's; made the folders lockOutput made for the
	// output folder, deepest first: released, the lock leaves neither
	// (release).
	path    string
	made    []string
	release sync.Once
	// temps are the temporary folders the command made while holding the
	// lock (tempDir), removed with it however the command ends: on
	// return, on an error, on a recovered panic or on an interrupt.
	tempMu sync.Mutex
	temps  []string
}

// removeTemp removes the temporary folder dir and what it holds. On an
// interrupt the command's workers may still be writing there: a file
// written between RemoveAll's removal of the files and of the folder
// fails it, so it is tried again (a worker cannot write once the folder
// is gone).
func removeTemp(dir string) {
	for range 100 {
		if os.RemoveAll(dir) == nil {
			return
		}
	}
}

// tempDir makes a temporary folder (os.MkdirTemp's pattern) that is
// removed when the lock is released (removeLock), so that neither an
// error nor an interrupt leaves it behind.
func (l *outputLock) tempDir(pattern string) (string, error) {
	dir, err := os.MkdirTemp("", pattern)
	if err != nil {
		return "", err
	}
	l.tempMu.Lock()
	l.temps = append(l.temps, dir)
	l.tempMu.Unlock()
	return dir, nil
}

// lockOutput creates the output folder if needed and takes its lock, so
// that one run at a time writes there. The lock is released by Unlock or
// when the process ends (however it ends); a second run meanwhile is
// refused with a message naming the holder.
//
// The lock file is removed when the lock is released, by its holder
// while it holds it; so a lock taken on a file that is no longer the one
// at its path (removed by the run that held it meanwhile) is no lock, and
// is taken again on the file now there.
func lockOutput(dir string) (*outputLock, error) {
	if fi, err := os.Stat(dir); err == nil && !fi.IsDir() {
		return nil, fmt.Errorf("output folder %s: is a file, not a folder; nothing was computed or written, and the file is untouched: give --out a folder (a new one, or an earlier run's)", dir)
	}
	path := filepath.Join(dir, lockFile)
	var made []string
	for attempt := 0; ; attempt++ {
		m, err := mkdirAllMade(dir)
		if err != nil {
			return nil, notWritable(dir, err)
		}
		for _, d := range m {
			if !slices.Contains(made, d) {
				made = append(made, d)
			}
		}
		slices.SortFunc(made, func(a, b string) int { return len(b) - len(a) }) // deepest first
		f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE|openNoFollow, 0o644)
		if errors.Is(err, fs.ErrNotExist) && attempt < 10 {
			continue // the folder was removed by a run that made it and has ended
		}
		if err != nil {
			return nil, notWritable(dir, err)
		}
		if busy, err := tryLock(f); err != nil {
			holder := ""
			if b, rerr := os.ReadFile(path); rerr == nil && len(b) > 0 {
				holder = " (held by " + strings.TrimSpace(string(b)) + ")"
			}
			f.Close()
			if busy {
				return nil, fmt.Errorf("output folder %s: another ordplan run is writing there%s; wait for it to finish or give another --out", dir, holder)
			}
			return nil, fmt.Errorf("output folder %s: cannot lock %s: %v", dir, lockFile, err)
		}
		if !isFileAt(f, path) && attempt < 10 {
			unlockFile(f)
			f.Close()
			continue
		}
		host, _ := os.Hostname()
		f.Truncate(0)
		f.WriteAt([]byte("process "+strconv.Itoa(os.Getpid())+" on "+host+"\n"), 0)
		return &outputLock{f: f, path: path, made: made}, nil
	}
}

// notWritable words an error met making the output folder dir or its
// lock file, the first file a run writes there: the folder, the system's
// reason, and what to do (O15).
func notWritable(dir string, err error) error {
	advice := "give --out another folder"
	if errors.Is(err, fs.ErrPermission) || errors.Is(err, syscall.EROFS) {
		advice = "give --out a folder you can write to, or make this one writable"
	}
	return fmt.Errorf("output folder %s: cannot write there (%v); nothing was computed or written: %s", dir, err, advice)
}

// mkdirAllMade makes the folder dir and those above it that do not
// exist, and lists those it made, deepest first.
func mkdirAllMade(dir string) ([]string, error) {
	var made []string
	for d := filepath.Clean(dir); ; d = filepath.Dir(d) {
		if _, err := os.Lstat(d); err == nil {
			break
		}
		made = append(made, d)
		if filepath.Dir(d) == d {
			break
		}
	}
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return nil, err
	}
	return made, nil
}

// isFileAt says whether the open file f is the file at path.
func isFileAt(f *os.File, path string) bool {
	a, err1 := f.Stat()
	b, err2 := os.Lstat(path)
	return err1 == nil && err2 == nil && os.SameFile(a, b)
}

// Unlock ends the watch on interrupts (delivering one held since a failed
// write) and releases the lock, leaving in the folder nothing of it
// (removeLock).
func (l *outputLock) Unlock() {
	if l != nil && l.w != nil {
		l.w.end()
		l.w = nil
	}
	l.removeLock()
}

// removeLock releases the lock and removes what the lock left: its file
// (removed while held, so that no other run takes a lock on it: see
// lockOutput) and the folders lockOutput made that are still empty (a
// refused or failed run into a new folder leaves none). Once; an
// interrupt that stops the command calls it too.
func (l *outputLock) removeLock() {
	if l == nil {
		return
	}
	l.release.Do(func() {
		l.tempMu.Lock()
		for _, d := range l.temps {
			removeTemp(d)
		}
		l.tempMu.Unlock()
		if l.f == nil {
			return
		}
		if isFileAt(l.f, l.path) {
			os.Remove(l.path)
		}
		unlockFile(l.f)
		l.f.Close()
		for _, d := range l.made {
			if os.Remove(d) != nil {
				break // not empty: the outputs, or another run's lock
			}
		}
	})
}

// afterTemp, when set (by tests), is called after each temporary file is
// written.
var afterTemp func()

// writeFiles writes every file into dir all or nothing: each goes to a new
// temporary file in dir (created exclusively, so no symlink is followed),
// is synced, and only when all are written are they renamed into place
// (entries under the names that are not regular files were refused
// before, notPlainFiles).
// On a failure before the renames the folder keeps what it had. names
// gives the order of the renames; the last one marks a complete run.
func writeFiles(dir string, names []string, files map[string][]byte) error {
	for _, n := range names {
		if n == "" || n != filepath.Base(n) || strings.HasPrefix(n, ".") {
			return fmt.Errorf("output file name %q is not a plain file name", n)
		}
	}
	tmp := make([]string, 0, len(names))
	defer func() {
		for _, t := range tmp {
			os.Remove(t)
		}
	}()
	for _, n := range names {
		f, err := os.CreateTemp(dir, "."+n+".tmp-*")
		if err != nil {
			return fmt.Errorf("writing %s: %w", filepath.Join(dir, n), err)
		}
		tmp = append(tmp, f.Name())
		_, err = f.Write(files[n])
		if err == nil {
			err = f.Sync()
		}
		if cerr := f.Close(); err == nil {
			err = cerr
		}
		if err == nil {
			err = os.Chmod(f.Name(), 0o644)
		}
		if err != nil {
			return fmt.Errorf("writing %s: %w (the previous outputs in %s are unchanged)", filepath.Join(dir, n), err, dir)
		}
		if afterTemp != nil {
			afterTemp()
		}
	}
	for i, n := range names {
		if err := os.Rename(tmp[i], filepath.Join(dir, n)); err != nil {
			return fmt.Errorf("writing %s: %w", filepath.Join(dir, n), err)
		}
	}
	tmp = nil
	if d, err := os.Open(dir); err == nil {
		d.Sync()
		d.Close()
	}
	return nil
}

// recordFile is the record a run leaves in its output folder: what
// produced the outputs and the SHA-256 of each (runner.RunJSON).
const recordFile = "run.json"

// claimOutput locks the output folder (lockOutput) and checks at once,
// before any data row is read or fitted, the outputs whose names are known
// before the run computes (fixed) and the record, run.json: a file there
// under one of these names that no earlier run left as it is stops the
// run (O4, O5). Names known only from the results are checked again when
// written (writeOutputs).
//
// An output folder holds one command's outputs: a run.json there that
// another command wrote (command, the one claiming, is run, rehearse or
// power) stops it too, so that one command's outputs never remove or
// replace another's (O6). A record written before the command was kept
// is a run's or a rehearsal's (power kept none).
//
// From then until Unlock an interrupt (Ctrl-C, SIGTERM, SIGHUP) stops the command
// with one line on stderr saying what the folder holds (interruptWatch);
// one arriving while the outputs are written is held until the folder is
// complete (commit).
func claimOutput(dir, command string, fixed []string, stderr io.Writer) (*outputLock, error) {
	lock, err := lockOutput(dir)
	if err != nil {
		return nil, err
	}
	if prev, ok := previousMaker(dir); ok && prev != command && (prev != "" || command == "power") {
		lock.Unlock()
		if prev == "" {
			prev = "run or rehearse"
		}
		return nil, fmt.Errorf("output folder %s: it holds the outputs of ordplan %s (its run.json says so); ordplan %s does not replace or remove them: give another --out, or move them away", dir, prev, command)
	}
	if err := notPlainFiles(dir, slices.Concat(fixed, []string{recordFile})); err != nil {
		lock.Unlock()
		return nil, err
	}
	removeTemporaries(dir)
	if mine := usersFiles(dir, slices.Concat(fixed, []string{recordFile}), nil); len(mine) > 0 {
		lock.Unlock()
		return nil, usersFilesError(dir, mine)
	}
	prev, _ := previousRecord(dir)
	lock.w = watchInterrupts(command, dir, prev != nil, stderr, lock.removeLock)
	lock.w.madeFolder = len(lock.made) > 0
	return lock, nil
}

// writeRun writes a run's or a rehearsal's files with its run.json (see
// writeOutputs).
func writeRun(lock *outputLock, r *runner.Result, command, dir string, files map[string][]byte) error {
	return writeOutputs(lock, dir, files, func(files map[string][]byte) ([]byte, error) {
		return runner.RunJSON(r, command, files)
	})
}

// writeOutputs writes a command's files into dir, then run.json, the
// record that record makes of them (with their hashes), all or nothing (see
// writeFiles): a failure leaves the previous run's files as they were, and
// no symlink in dir is written through. A file under an output's name that
// no earlier run left as it is stops the write (usersFiles). The caller
// holds the folder's lock (claimOutput): the writing of the files and the
// removal of the previous run's outputs this run does not write are one
// commit of the folder, during which an interrupt is held (lock.commit).
func writeOutputs(lock *outputLock, dir string, files map[string][]byte, record func(map[string][]byte) ([]byte, error)) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return fmt.Errorf("output directory: %w", err)
	}
	names := make([]string, 0, len(files)+1)
	for n := range files {
		if n == recordFile {
			return fmt.Errorf("an output may not be called %s", recordFile)
		}
		names = append(names, n)
	}
	sort.Strings(names)
	seen := map[string]string{}
	for _, n := range names {
		if prev, dup := seen[strings.ToLower(n)]; dup {
			return fmt.Errorf("outputs %s and %s differ only in letter case; on some file systems one would replace the other", prev, n)
		}
		seen[strings.ToLower(n)] = n
	}
	b, err := record(files)
	if err != nil {
		return err
	}
	all := make(map[string][]byte, len(files)+1)
	for n, c := range files {
		all[n] = c
	}
	all[recordFile] = b
	names = append(names, recordFile)
	if err := notPlainFiles(dir, names); err != nil {
		return err
	}
	if mine := usersFiles(dir, names, files); len(mine) > 0 {
		return usersFilesError(dir, mine)
	}
	stale := staleOutputs(dir, all)
	replaced := replacedOutputs(dir, all)
	return lock.commit(func() error {
		kept, unkeep := "", func() {}
		if len(replaced) > 0 {
			var err error
			if kept, unkeep, err = keepEarlier(dir, replaced); err != nil {
				return err
			}
		}
		if err := writeFiles(dir, names, all); err != nil {
			unkeep() // the earlier run is still in place
			return err
		}
		if kept != "" && lock != nil && lock.w != nil {
			fmt.Fprintf(lock.w.stderr, "ordplan %s: output folder %s held an earlier run whose outputs differ from this run's: %s; kept them in %s (%s lists what changed)\n",
				lock.w.command, dir, recordChange(kept, all[recordFile]), kept, commandLine([]string{"--previous", kept}))
		}
		// Files the previous run listed and this one does not write (the
		// predictions of an outcome no longer predicted) would sit beside
		// the new run.json as if they were its own: remove them.
		for _, n := range stale {
			os.Remove(filepath.Join(dir, n))
		}
		return nil
	})
}

// tempName matches the temporary files writeFiles makes (os.CreateTemp
// with the pattern "."+name+".tmp-*": a dot, the output's name, ".tmp-"
// and digits).
var tempName = regexp.MustCompile(`^\.[^/]+\.tmp-[0-9]+$`)

// removeTemporaries removes the temporary files an earlier run in dir left
// when it was killed (SIGKILL, a power cut) before it renamed them into
// place: regular files named as writeFiles names them. The caller holds
// the folder's lock, so no run is writing them.
func removeTemporaries(dir string) {
	entries, err := os.ReadDir(dir)
	if err != nil {
		return
	}
	for _, e := range entries {
		if e.Type().IsRegular() && tempName.MatchString(e.Name()) {
			os.Remove(filepath.Join(dir, e.Name()))
		}
	}
}

// notPlainFiles refuses entries in dir under an output's name that are not
// regular files (O1): a symlink, a folder, a device. ordplan writes only
// regular files, so such an entry is the user's own; replacing a symlink
// would lose the link (the rename replaces it, never its target), and a
// folder would stop the renames half way. Checked before any file is
// written, so the folder keeps what it had.
func notPlainFiles(dir string, names []string) error {
	var odd []string
	for _, n := range names {
		fi, err := os.Lstat(filepath.Join(dir, n))
		if err != nil || fi.Mode().IsRegular() {
			continue
		}
		kind := "not a regular file"
		switch {
		case fi.Mode()&os.ModeSymlink != 0:
			kind = "a symbolic link"
			if target, err := os.Readlink(filepath.Join(dir, n)); err == nil {
				kind += " (to " + target + ")"
			}
		case fi.IsDir():
			kind = "a folder"
		}
		odd = append(odd, n+" is "+kind)
	}
	if len(odd) == 0 {
		return nil
	}
	sort.Strings(odd)
	return fmt.Errorf("output folder %s: %s; ordplan writes its outputs as plain files and does not replace what it did not write: move %s away, or give another --out",
		dir, words.AndList(odd), map[bool]string{true: "it", false: "them"}[len(odd) == 1])
}

// usersFilesError is the refusal to replace the user's files: O4 where
// the folder's run.json records other contents for them, or none; O7 where
// the folder has no run.json at all, so that the files may be an earlier
// ordplan's outputs made before it kept the record (ordplan power's were)
// or the user's own.
func usersFilesError(dir string, mine []string) error {
	names := words.AndList(mine)
	// The words that follow the number of files: one, or several.
	w := struct{ is, they, them, file, output, old string }{"is", "it", "it", "your own file", "an output", "an old output"}
	if len(mine) > 1 {
		w.is, w.they, w.them, w.file, w.output, w.old = "are", "they", "them", "your own files", "outputs", "old outputs"
	}
	if fi, err := os.Lstat(filepath.Join(dir, recordFile)); err != nil || !fi.Mode().IsRegular() {
		return fmt.Errorf("output folder %s: holds %s but no %s (the record ordplan keeps of the outputs it writes), so %s %s %s, or %s of an earlier ordplan that kept no record; ordplan does not overwrite %s: move %s away (or delete %s if %s %s you no longer need), or give another --out",
			dir, names, recordFile, w.they, w.is, w.file, w.output, w.them, w.them, w.them, w.they, w.is+" "+w.old)
	}
	return fmt.Errorf("output folder %s: %s %s not as an earlier ordplan run there left %s (%s, or %s changed since); ordplan does not overwrite %s: move %s away, or give another --out",
		dir, names, w.is, w.them, w.file, w.output, w.them, w.them)
}

// staleOutputs lists the outputs named by the run.json in dir that are not
// among files: plain file names of regular files (never a symlink) whose
// content still has the SHA-256 the previous run.json recorded.
func staleOutputs(dir string, files map[string][]byte) []string {
	prev := previousOutputs(dir)
	var out []string
	for n := range prev {
		if _, keep := files[n]; keep || n != filepath.Base(n) || strings.HasPrefix(n, ".") || n == "run.json" {
			continue
		}
		fi, err := os.Lstat(filepath.Join(dir, n))
		if err != nil || !fi.Mode().IsRegular() {
			continue
		}
		// Only a file still as the previous run wrote it: one the user
		// changed since is theirs and stays.
		c, err := os.ReadFile(filepath.Join(dir, n))
		if err != nil {
			continue
		}
		if sha256Hex(c) == prev[n] {
			out = append(out, n)
		}
	}
	sort.Strings(out)
	return out
}

// previousOutputs is the SHA-256 of each output the run.json in dir
// records (nil when there is none to read).
func previousOutputs(dir string) map[string]string {
	outputs, _ := previousRecord(dir)
	return outputs
}

// previousRecord reads the run.json in dir (readRecord): the SHA-256 of
// each output it records, and whether a regular file there is not such a
// record (the user's own run.json). A symlink there counts as absent
// (notPlainFiles refuses it before anything is written).
func previousRecord(dir string) (outputs map[string]string, foreign bool) {
	rec, found := readRecord(filepath.Join(dir, recordFile))
	if !found {
		return nil, false
	}
	if rec == nil || rec.Outputs == nil {
		return nil, true
	}
	return rec.Outputs, false
}

// previousMaker is the command the run.json in dir names as the maker of
// its outputs ("" for a record from before it was kept); ok is false when
// there is no ordplan record there.
func previousMaker(dir string) (command string, ok bool) {
	rec, _ := readRecord(filepath.Join(dir, recordFile))
	if rec == nil || rec.Outputs == nil {
		return "", false
	}
	return rec.MadeBy, true
}

// previousFolder refuses a --previous that is no run's output folder in
// ways ReadPrevious would name only as a file it cannot open (O12): a
// file (decisions.json itself, say) or the folder of a power study, whose
// run.json says so and which has no decisions.json.
func previousFolder(dir string) error {
	if fi, err := os.Stat(dir); err == nil && !fi.IsDir() {
		hint := ""
		if b := filepath.Base(dir); b == "decisions.json" || b == recordFile {
			hint = ": give the folder that holds it, " + filepath.Dir(dir)
		}
		return fmt.Errorf("--previous: %s is a file, not a folder; --previous names the output folder of an earlier ordplan run (its --out, which holds its decisions.json)%s", dir, hint)
	}
	if maker, ok := previousMaker(dir); ok && maker == "power" {
		return fmt.Errorf("--previous: %s holds the outputs of ordplan power (its run.json says so): a power study runs the plan on simulated data and writes no decisions.json; name the output folder of an earlier ordplan run, or leave --previous out", dir)
	}
	return nil
}

// maxRecordBytes is the largest run.json read as a record: larger is not
// one this program wrote.
const maxRecordBytes = 64 << 20

// readRecord reads the run record at path, the one reader of run.json
// files (an output folder's and those kept under earlier/). found is false
// when no regular file is there (absent, a symlink, a folder); rec is nil
// when the file there is not an ordplan run record (larger than
// maxRecordBytes, unreadable, not JSON of a record, another program's).
func readRecord(path string) (rec *runner.RunRecord, found bool) {
	fi, err := os.Lstat(path)
	if err != nil || !fi.Mode().IsRegular() {
		return nil, false
	}
	if fi.Size() > maxRecordBytes {
		return nil, true
	}
	b, err := os.ReadFile(path)
	if err != nil {
		return nil, true
	}
	var r runner.RunRecord
	if json.Unmarshal(b, &r) != nil || r.Program != "ordplan" {
		return nil, true
	}
	return &r, true
}

// usersFiles lists the files in dir among names that a run would replace
// and that are not as an earlier run left them (the run.json there records
// another SHA-256, or none): the user's own files, or outputs they changed
// since; and run.json when it is not an ordplan run's record. With the
// contents the run writes (files), a file with the very bytes it writes is
// not among them; without them (nil: before the run computes, claimOutput)
// every file not recorded is.
func usersFiles(dir string, names []string, files map[string][]byte) []string {
	prev, foreign := previousRecord(dir)
	var out []string
	for _, n := range names {
		if n == recordFile {
			if foreign {
				out = append(out, n)
			}
			continue
		}
		fi, err := os.Lstat(filepath.Join(dir, n))
		if err != nil || !fi.Mode().IsRegular() {
			continue // absent, or not a regular file (refused by notPlainFiles)
		}
		c, err := os.ReadFile(filepath.Join(dir, n))
		if err != nil {
			out = append(out, n)
			continue
		}
		h := sha256Hex(c)
		if content, known := files[n]; h != prev[n] && (!known || h != sha256Hex(content)) {
			out = append(out, n)
		}
	}
	sort.Strings(out)
	return out
}

func sha256Hex(b []byte) string {
	sum := sha256.Sum256(b)
	return hex.EncodeToString(sum[:])
}

// earlierFolder is the folder inside an output folder where a run keeps an
// earlier run's outputs that it would replace with other contents or
// remove (keepEarlier), one subfolder per earlier run.
const earlierFolder = "earlier"

// replacedOutputs lists the outputs that the run.json in dir records, that
// are still as it recorded them, and that writing all would lose: replaced
// by other bytes, or no longer written (removed as stale). Empty when the
// run writes every recorded output with the same bytes (a rerun of the
// same program, plan and data), so that such a rerun keeps nothing.
func replacedOutputs(dir string, all map[string][]byte) []string {
	prev := previousOutputs(dir)
	var out []string
	for n, h := range prev {
		if n != filepath.Base(n) || strings.HasPrefix(n, ".") || n == recordFile {
			continue
		}
		if c, ok := all[n]; ok && sha256Hex(c) == h {
			continue
		}
		fi, err := os.Lstat(filepath.Join(dir, n))
		if err != nil || !fi.Mode().IsRegular() {
			continue
		}
		if c, err := os.ReadFile(filepath.Join(dir, n)); err == nil && sha256Hex(c) == h {
			out = append(out, n)
		}
	}
	if len(out) == 0 {
		return nil
	}
	// The earlier run's other outputs go with them, so that the kept
	// folder is that run whole, with its record.
	out = out[:0]
	for n, h := range prev {
		if n != filepath.Base(n) || strings.HasPrefix(n, ".") || n == recordFile {
			continue
		}
		if c, err := os.ReadFile(filepath.Join(dir, n)); err == nil && sha256Hex(c) == h {
			out = append(out, n)
		}
	}
	sort.Strings(out)
	return append(out, recordFile)
}

// keepEarlier keeps the earlier run's files names (its run.json last) in
// dir/earlier/TIME, TIME the UTC time its run.json was written
// (20261203T183114Z, with -2, -3 ... when taken): linked where the file
// system allows, else copied, into a temporary folder renamed into place
// once complete. It returns the folder's path, and undo, which removes
// it again with the folder earlier/ when it made that (a failed write
// leaves the output folder as it was).
func keepEarlier(dir string, names []string) (string, func(), error) {
	base := filepath.Join(dir, earlierFolder)
	_, err := os.Lstat(base)
	madeBase := err != nil
	removeBase := func() {
		if madeBase {
			os.Remove(base)
		}
	}
	if err := os.MkdirAll(base, 0o755); err != nil {
		return "", nil, fmt.Errorf("output folder %s: cannot keep the earlier run's outputs in %s: %w", dir, base, err)
	}
	stamp := "earlier-run"
	if fi, err := os.Stat(filepath.Join(dir, recordFile)); err == nil {
		stamp = fi.ModTime().UTC().Format("20060102T150405Z")
	}
	tmp, err := os.MkdirTemp(base, "."+stamp+".tmp-")
	if err != nil {
		removeBase()
		return "", nil, fmt.Errorf("output folder %s: cannot keep the earlier run's outputs in %s: %w", dir, base, err)
	}
	for _, n := range names {
		src, dst := filepath.Join(dir, n), filepath.Join(tmp, n)
		if os.Link(src, dst) == nil {
			continue
		}
		c, err := os.ReadFile(src)
		if err == nil {
			err = os.WriteFile(dst, c, 0o644)
		}
		if err != nil {
			os.RemoveAll(tmp)
			removeBase()
			return "", nil, fmt.Errorf("output folder %s: cannot keep the earlier run's %s in %s: %w", dir, n, base, err)
		}
	}
	for i := 1; ; i++ {
		kept := filepath.Join(base, stamp)
		if i > 1 {
			kept += "-" + strconv.Itoa(i)
		}
		if _, err := os.Lstat(kept); err == nil {
			continue
		}
		if err := os.Rename(tmp, kept); err != nil {
			os.RemoveAll(tmp)
			removeBase()
			return "", nil, fmt.Errorf("output folder %s: cannot keep the earlier run's outputs in %s: %w", dir, kept, err)
		}
		return kept, func() { os.RemoveAll(kept); removeBase() }, nil
	}
}

// recordChange says what differs between the run.json kept in kept and
// this run's record (runner.RecordChanges: the plan, each input file by
// name, the program, the command line, ...).
func recordChange(kept string, record []byte) string {
	was, _ := readRecord(filepath.Join(kept, recordFile))
	var now runner.RunRecord
	if was == nil || json.Unmarshal(record, &now) != nil {
		return "its record could not be read"
	}
	if changed := runner.RecordChanges(was, &now); len(changed) > 0 {
		return words.AndList(changed)
	}
	if was.Revision == "" || now.Revision == "" {
		// A build without its source revision (go run, a copy without
		// .git, -buildvcs=false) says only its version: a program changed
		// under the same version looks the same.
		return "nothing its run.json records differs (the plan, every input file, the program's version and the command line are the same; the program's source revision is not recorded, so a change of the program under the same version does not show)"
	}
	return "nothing its run.json records differs (the plan, every input file, the program's build and the command line are the same)"
}

// folderRecords reads the run records an output folder holds: its
// run.json and those of the runs kept under earlier/ (keepEarlier), in
// name order; files that are not ordplan records (or are links, or too
// large) are passed over.
func folderRecords(dir string) []runner.RunRecord {
	paths := []string{filepath.Join(dir, recordFile)}
	if more, err := filepath.Glob(filepath.Join(dir, earlierFolder, "*", recordFile)); err == nil {
		slices.Sort(more)
		paths = append(paths, more...)
	}
	var out []runner.RunRecord
	for _, p := range paths {
		if rec, _ := readRecord(p); rec != nil {
			out = append(out, *rec)
		}
	}
	return out
}
