package main

// The output folder: every file of a run, or none.
//
// A run that writes several files (value: memo.pdf, valuation.xlsx,
// valuation.json and more) must never leave a mix of old and new files, a
// half-written file, or stray temporary files, whether it fails, is
// interrupted or is killed, and two runs into one folder must not mix
// their files. It goes like this:
//
//  1. Lock. An exclusive lock (flock) on a lock file beside the output
//     folder, held for the whole run; a second run into the same folder is
//     refused at once with the process id of the first. The lock file is
//     removed when the run ends.
//  2. Clean up and check, under the lock: staging folders left by a run
//     that was killed are removed (or, if that run had begun to move its
//     files in, its move is finished), existing outputs are refused
//     without --force, and a read-only folder is refused, all before the
//     long work starts.
//  3. Stage. The files are rendered into a fresh staging folder, with every
//     temporary file of the renderers (excelize's too) inside it; each file
//     is synced.
//  4. Swap. When every file is ready, one rename makes them visible: the
//     staging folder becomes the output folder if that did not exist, or
//     is exchanged with it atomically (Linux renameat2 RENAME_EXCHANGE) if
//     it held nothing but earlier outputs. A kill at any moment leaves
//     either the old folder or the new one, never a mix.
//
// When the output folder holds other files too (or is the working folder,
// or sits on another file system than its parent, or its parent cannot be
// written), the staging folder is made inside it and the files are moved
// in one by one after a commit mark is written; a run killed in the
// middle of those renames leaves a mix that the next run into the folder
// completes before anything else. SIGINT, SIGTERM and SIGHUP remove the
// staging folder before the process ends.

import (
	"bufio"
	"crypto/rand"
	"encoding/hex"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"os/signal"
	"path/filepath"
	"runtime/debug"
	"slices"
	"strconv"
	"strings"
	"sync"
	"syscall"
)

// outFile is one output: its name in the output folder and the function
// that writes its bytes.
type outFile struct {
	name  string
	write func(io.Writer) error
}

// Names of the bookkeeping files and folders, all hidden.
const (
	stageInfix   = ".grantworth-stage-" // a staging folder: "." + base + infix + random beside, or infix + random inside
	lockSuffix   = ".grantworth-lock"   // the lock file: "." + base + suffix beside, or suffix inside
	manifestName = ".grantworth-stage"  // in a staging folder: the output names, one a line
	commitName   = ".grantworth-commit" // in a staging folder: its files are being moved in
	stageTmp     = ".tmp"               // in a staging folder: the renderers' temporary files
)

// errBusy is returned when another run holds the output folder's lock.
var errBusy = errors.New("another grantworth run is writing to")

// outputSet is an output folder being written all or nothing. Open it
// before the long work (openOutput), write the files when they are ready
// (write), and close it in any case (close).
type outputSet struct {
	dir       string   // the output folder, absolute, symbolic links resolved
	shown     string   // the folder as the user named it, for messages
	names     []string // every file the run may write
	force     bool
	swap      bool     // stage beside dir and swap the folders; else stage inside and move the files
	stage     string   // the staging folder
	lock      *os.File // holds the flock
	lockAt    string   // the lock file's path
	made      []string // folders created for the output (missing parents), deepest last
	ios       *IO      // where an interrupt is reported
	sigs      chan os.Signal
	done      chan struct{}
	mu        sync.Mutex // excludes the signal handler from a commit
	committed bool       // the files are visible
	aborted   bool       // the staging folder and the lock are gone
}

// openOutput prepares dir to receive the files names, all or none. It
// takes the folder's lock, clears what an earlier killed run left,
// refuses existing outputs unless force, checks that the folder can be
// written and makes the staging folder. An interrupt is reported on
// ios.Err. The caller must close the set.
func openOutput(dir string, names []string, force bool, ios *IO) (*outputSet, error) {
	abs, err := filepath.Abs(dir)
	if err != nil {
		return nil, err
	}
	// Write through a symbolic link to the folder it names.
	if real, err := filepath.EvalSymlinks(abs); err == nil {
		abs = real
	} else if !errors.Is(err, fs.ErrNotExist) {
		return nil, err
	}
	o := &outputSet{dir: abs, shown: dir, names: names, force: force, ios: ios}
	st, err := os.Stat(abs)
	exists := err == nil
	switch {
	case err != nil && !errors.Is(err, fs.ErrNotExist):
		return nil, err
	case exists && !st.IsDir():
		return nil, badInput("--out %s is a file, not a folder", dir)
	}
	o.catchSignals()
	o.mu.Lock()
	err = o.open(exists)
	o.mu.Unlock()
	if err != nil {
		o.close()
		return nil, err
	}
	return o, nil
}

// open does openOutput's work, holding o.mu.
func (o *outputSet) open(exists bool) error {
	var err error
	if !exists {
		if o.made, err = mkdirParents(filepath.Dir(o.dir)); err != nil {
			return fmt.Errorf("cannot create the output folder %s: %w", o.shown, err)
		}
	}
	if err := o.takeLock(exists); err != nil {
		return err
	}
	if err := o.recover(); err != nil {
		return err
	}
	if exists {
		if err := o.checkExisting(); err != nil {
			return err
		}
		if err := writable(o.dir); err != nil {
			return fmt.Errorf("cannot write to the output folder %s: %w", o.shown, err)
		}
	}
	o.swap = !exists || o.canSwap()
	return o.makeStage(exists)
}

// tempDir is a folder for the renderers' temporary files, removed with the
// staging folder.
func (o *outputSet) tempDir() string { return filepath.Join(o.stage, stageTmp) }

// write renders every file into the staging folder at the same time (a
// large ledger's workbook and JSON each take seconds; every renderer only
// reads its input), then makes them visible together. On any failure
// nothing is visible and the staging folder is removed by close.
func (o *outputSet) write(files []outFile) error {
	for _, f := range files {
		if !slices.Contains(o.names, f.name) {
			panic("grantworth: output " + f.name + " was not declared to openOutput")
		}
	}
	errs := make([]error, len(files))
	var wg sync.WaitGroup
	for i, f := range files {
		wg.Go(func() { errs[i] = writeStaged(filepath.Join(o.stage, f.name), f) })
	}
	wg.Wait()
	if err := errors.Join(errs...); err != nil {
		return err
	}
	return o.commit()
}

// close ends the run: the staging folder (if not committed) and the lock
// file are removed and the lock released, and folders made for a run that
// wrote nothing are removed. It is safe to call more than once.
func (o *outputSet) close() {
	if o.sigs != nil {
		signal.Stop(o.sigs)
		close(o.done)
		o.sigs = nil
	}
	o.mu.Lock()
	defer o.mu.Unlock()
	o.abortLocked()
}

// abortLocked removes what the run made unless it committed, and releases
// the lock. The caller holds o.mu.
func (o *outputSet) abortLocked() {
	if o.aborted {
		return
	}
	o.aborted = true
	if !o.committed && o.stage != "" {
		removeAllRetry(o.stage)
	}
	if o.lock != nil {
		os.Remove(o.lockAt)
		o.lock.Close() // releases the flock
		o.lock = nil
	}
	if !o.committed {
		for i := len(o.made) - 1; i >= 0; i-- {
			os.Remove(o.made[i]) // only if still empty
		}
	}
}

// catchSignals removes the staging folder on SIGINT, SIGTERM or SIGHUP and
// then ends the process by the same signal, so that the shell sees it.
// A commit in progress is finished first.
func (o *outputSet) catchSignals() {
	o.sigs = make(chan os.Signal, 1)
	o.done = make(chan struct{})
	signal.Notify(o.sigs, os.Interrupt, syscall.SIGTERM, syscall.SIGHUP)
	sigs, done := o.sigs, o.done
	go func() {
		select {
		case sig := <-sigs:
			o.mu.Lock()
			o.abortLocked()
			nl := ""
			if o.ios.ErrIsTerminal {
				nl = "\n" // after a progress bar or ^C
			}
			if o.committed {
				fmt.Fprintf(o.ios.Err, "%sgrantworth: %s; the files were already written to %s\n", nl, signalName(sig), o.shown)
			} else {
				fmt.Fprintf(o.ios.Err, "%sgrantworth: %s; nothing was written\n", nl, signalName(sig))
			}
			dieBy(sig)
		case <-done:
		}
	}()
}

// takeLock locks the output folder, beside it if its parent can be
// written, else inside it. A lock file removed by the run that held it
// (its path then names another file or none) is taken again.
func (o *outputSet) takeLock(exists bool) error {
	base := filepath.Base(o.dir)
	beside := filepath.Join(filepath.Dir(o.dir), "."+base+lockSuffix)
	for try := 0; try < 100; try++ {
		path := beside
		f, err := os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
		if err != nil && exists && (errors.Is(err, fs.ErrPermission) || errors.Is(err, syscall.EROFS)) {
			path = filepath.Join(o.dir, lockSuffix)
			f, err = os.OpenFile(path, os.O_RDWR|os.O_CREATE, 0o644)
		}
		if err != nil {
			return fmt.Errorf("cannot write to the output folder %s: %w", o.shown, err)
		}
		if err := flock(f); err != nil {
			pid, _ := io.ReadAll(io.LimitReader(f, 20))
			f.Close()
			if errors.Is(err, errBusy) {
				who := ""
				if p := strings.TrimSpace(string(pid)); p != "" {
					who = " (process " + p + ")"
				}
				return fmt.Errorf("%w %s%s; wait for it to finish, or choose another --out", errBusy, o.shown, who)
			}
			return fmt.Errorf("locking %s: %w", path, err)
		}
		if !sameFile(f, path) {
			f.Close()
			continue
		}
		f.Truncate(0)
		f.WriteAt([]byte(strconv.Itoa(os.Getpid())+"\n"), 0)
		o.lock, o.lockAt = f, path
		return nil
	}
	return fmt.Errorf("%w %s", errBusy, o.shown)
}

// recover clears what killed runs left, under the lock: their staging
// folders beside and inside the output folder and the temporary files of
// earlier versions. A staging folder whose files were being moved in has
// the move finished.
func (o *outputSet) recover() error {
	base := filepath.Base(o.dir)
	var stale []string
	if m, err := filepath.Glob(filepath.Join(filepath.Dir(o.dir), "."+globQuote(base)+stageInfix+"*")); err == nil {
		stale = append(stale, m...)
	}
	if m, err := filepath.Glob(filepath.Join(o.dir, stageInfix+"*")); err == nil {
		stale = append(stale, m...)
	}
	for _, s := range stale {
		if st, err := os.Lstat(s); err != nil || !st.IsDir() {
			continue
		}
		if err := o.recoverStage(s); err != nil {
			return fmt.Errorf("clearing %s, left by an interrupted run: %w", s, err)
		}
	}
	for _, n := range o.names {
		old, _ := filepath.Glob(filepath.Join(o.dir, "."+globQuote(n)+".tmp-*"))
		for _, p := range old {
			if st, err := os.Lstat(p); err == nil && st.Mode().IsRegular() {
				os.Remove(p)
			}
		}
	}
	return nil
}

// recoverStage clears one staging folder of a killed run. With a commit
// mark its files go into the output folder (the killed run had checked
// that they could); otherwise it never became visible, or it is an old
// output folder swapped out (it has no manifest), and it goes.
func (o *outputSet) recoverStage(s string) error {
	names, manifest := readLines(filepath.Join(s, manifestName))
	if _, committed := readLines(filepath.Join(s, commitName)); manifest && committed {
		for _, n := range names {
			if n == "" || n != filepath.Base(n) || strings.HasPrefix(n, ".") {
				continue
			}
			if err := os.Rename(filepath.Join(s, n), filepath.Join(o.dir, n)); err != nil && !errors.Is(err, fs.ErrNotExist) {
				return err
			}
		}
		if err := syncDir(o.dir); err != nil {
			return err
		}
		fmt.Fprintf(o.ios.Err, "grantworth: finished moving the files of an interrupted run into %s\n", o.shown)
	}
	return os.RemoveAll(s)
}

// checkExisting refuses outputs already in the folder unless force, and
// anything in the way of an output that is not a file.
func (o *outputSet) checkExisting() error { return checkExisting(o.dir, o.shown, o.names, o.force) }

// checkExisting refuses the outputs names already in dir (shown so in
// messages) unless force, and anything in the way of one that is not a
// file. A missing folder holds none.
func checkExisting(dir, shown string, names []string, force bool) error {
	var have []string
	for _, n := range names {
		st, err := os.Lstat(filepath.Join(dir, n))
		switch {
		case errors.Is(err, fs.ErrNotExist) || errors.Is(err, syscall.ENOTDIR):
			continue
		case err != nil:
			return err
		case !st.Mode().IsRegular():
			return badInput("%s is in the way: it is not a file, and grantworth replaces only files", filepath.Join(shown, n))
		}
		have = append(have, filepath.Join(shown, n))
	}
	if len(have) > 0 && !force {
		return badInput("%s already exist%s; use --force to replace %s", joinList(have), plural1(len(have)), them(len(have)))
	}
	return nil
}

// canSwap reports whether the existing output folder can be exchanged
// whole with the staging folder: it holds nothing but outputs of this run
// (regular files), it is not the working folder or above it, and it sits
// on the same file system as its parent.
func (o *outputSet) canSwap() bool {
	if !exchangeSupported || !o.lockedBeside() {
		return false
	}
	if wd, err := os.Getwd(); err == nil {
		if real, err := filepath.EvalSymlinks(wd); err == nil {
			wd = real
		}
		if wd == o.dir || strings.HasPrefix(wd, o.dir+string(filepath.Separator)) {
			return false
		}
	}
	if !sameDevice(o.dir, filepath.Dir(o.dir)) {
		return false
	}
	return o.onlyOutputs(o.dir)
}

// lockedBeside reports whether the lock file is beside the output folder,
// in its parent, which can then be written.
func (o *outputSet) lockedBeside() bool {
	return o.lockAt == filepath.Join(filepath.Dir(o.dir), "."+filepath.Base(o.dir)+lockSuffix)
}

// onlyOutputs reports whether dir holds nothing but regular files named
// as outputs of this run.
func (o *outputSet) onlyOutputs(dir string) bool {
	ents, err := os.ReadDir(dir)
	if err != nil {
		return false
	}
	for _, e := range ents {
		if !e.Type().IsRegular() || !slices.Contains(o.names, e.Name()) {
			return false
		}
	}
	return true
}

// makeStage creates the staging folder with its manifest and temporary
// folder: beside the output folder if the lock could be made there and it
// is on the same file system (so that nothing of the run is inside the
// user's folder before the files are), else inside it.
func (o *outputSet) makeStage(exists bool) error {
	parent, prefix := o.dir, stageInfix
	if o.lockedBeside() && (!exists || sameDevice(o.dir, filepath.Dir(o.dir))) {
		parent, prefix = filepath.Dir(o.dir), "."+filepath.Base(o.dir)+stageInfix
	}
	var err error
	for try := 0; try < 100; try++ {
		var b [6]byte
		rand.Read(b[:])
		o.stage = filepath.Join(parent, prefix+hex.EncodeToString(b[:]))
		if err = os.Mkdir(o.stage, 0o755); !errors.Is(err, fs.ErrExist) {
			break
		}
	}
	if err != nil {
		o.stage = ""
		return fmt.Errorf("cannot write to the output folder %s: %w", o.shown, err)
	}
	if err := o.writeManifest(); err != nil {
		return err
	}
	return os.Mkdir(o.tempDir(), 0o700)
}

// writeManifest lists the outputs in the staging folder, which marks it
// as a staging folder for the recovery of a killed run.
func (o *outputSet) writeManifest() error {
	return writeFileSynced(filepath.Join(o.stage, manifestName), []byte(strings.Join(o.names, "\n")+"\n"))
}

// commit makes the staged files visible: one rename of the staging folder,
// or, when the folder cannot be swapped, one rename per file after a
// commit mark.
func (o *outputSet) commit() error {
	if err := os.RemoveAll(o.tempDir()); err != nil {
		return err
	}
	o.mu.Lock()
	defer o.mu.Unlock()
	if o.aborted {
		return errors.New("interrupted")
	}
	if o.swap {
		done, err := o.commitSwap()
		if done {
			o.committed = true
		}
		if err != nil || done {
			return err
		}
		// The folder changed under the run (someone added a file): move
		// the files in one by one instead.
	}
	return o.commitMove()
}

// commitSwap renames the staging folder to the output folder, or exchanges
// the two. It returns false, and does nothing, when the output folder now
// holds other files.
func (o *outputSet) commitSwap() (bool, error) {
	if err := os.Remove(filepath.Join(o.stage, manifestName)); err != nil {
		return false, err
	}
	if err := syncDir(o.stage); err != nil {
		return false, err
	}
	parent := filepath.Dir(o.dir)
	st, err := os.Stat(o.dir)
	if errors.Is(err, fs.ErrNotExist) {
		if err := os.Rename(o.stage, o.dir); err != nil {
			return false, fmt.Errorf("moving the outputs into %s: %w", o.shown, err)
		}
		return true, syncDir(parent)
	}
	if err != nil {
		return false, err
	}
	if !o.onlyOutputs(o.dir) || !o.checkNoneNew() {
		return false, o.writeManifest()
	}
	os.Chmod(o.stage, st.Mode().Perm())
	if err := exchange(o.stage, o.dir); errors.Is(err, errNoExchange) {
		// The file system cannot exchange folders: move the files instead.
		return false, o.writeManifest()
	} else if err != nil {
		return false, fmt.Errorf("swapping the outputs into %s: %w", o.shown, err)
	}
	if err := syncDir(parent); err != nil {
		return true, err
	}
	// The staging path now holds the old folder: anything but old outputs
	// that came into it at the last moment goes back, the rest goes.
	if ents, err := os.ReadDir(o.stage); err == nil {
		for _, e := range ents {
			if !e.Type().IsRegular() || !slices.Contains(o.names, e.Name()) {
				if dst := filepath.Join(o.dir, e.Name()); !exists(dst) {
					os.Rename(filepath.Join(o.stage, e.Name()), dst)
				}
			}
		}
	}
	os.RemoveAll(o.stage)
	return true, nil
}

// checkNoneNew reports whether, without force, none of the outputs has
// appeared since the folder was checked.
func (o *outputSet) checkNoneNew() bool {
	if o.force {
		return true
	}
	for _, n := range o.names {
		if exists(filepath.Join(o.dir, n)) {
			return false
		}
	}
	return true
}

// commitMove moves the staged files into the output folder one by one,
// after a commit mark that lets the next run finish the move if this one
// is killed in the middle. Without force a file that has appeared since
// the check is not replaced: the files already moved are taken back.
func (o *outputSet) commitMove() error {
	if err := writeFileSynced(filepath.Join(o.stage, commitName), nil); err != nil {
		return err
	}
	if err := syncDir(o.stage); err != nil {
		return err
	}
	var moved []string
	for _, n := range o.names {
		src, dst := filepath.Join(o.stage, n), filepath.Join(o.dir, n)
		if !exists(src) {
			continue
		}
		var err error
		if o.force {
			err = os.Rename(src, dst)
		} else {
			err = renameNoReplace(src, dst)
		}
		if err != nil {
			for _, m := range moved {
				os.Remove(m)
			}
			os.Remove(filepath.Join(o.stage, commitName))
			if errors.Is(err, fs.ErrExist) {
				return badInput("%s appeared while the run was working; nothing was written (use --force to replace it)", filepath.Join(o.shown, n))
			}
			return fmt.Errorf("moving %s into %s: %w", n, o.shown, err)
		}
		moved = append(moved, dst)
	}
	o.committed = true
	if err := syncDir(o.dir); err != nil {
		return err
	}
	return os.RemoveAll(o.stage)
}

// writeStaged writes one file of the run, synced. A panic in the renderer
// is returned as an error, so that the staging folder is still removed.
func writeStaged(path string, f outFile) (err error) {
	defer func() {
		if r := recover(); r != nil {
			err = &crashError{value: r, stack: debug.Stack()}
		}
	}()
	tf, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_EXCL, 0o644)
	if err != nil {
		return err
	}
	defer tf.Close()
	bw := bufio.NewWriterSize(tf, 1<<16)
	if err := f.write(bw); err != nil {
		return fmt.Errorf("%s: %w", f.name, err)
	}
	if err := bw.Flush(); err != nil {
		return fmt.Errorf("writing %s: %w", f.name, err)
	}
	if err := tf.Sync(); err != nil {
		return fmt.Errorf("syncing %s: %w", f.name, err)
	}
	return tf.Close()
}

// writeFileAtomic writes one file all or nothing: into a temporary file
// beside it, synced, then renamed over it; the temporary file is removed
// on any failure.
func writeFileAtomic(path string, write func(io.Writer) error) (err error) {
	dir := filepath.Dir(path)
	tf, err := os.CreateTemp(dir, "."+filepath.Base(path)+".tmp-*")
	if err != nil {
		return err
	}
	defer func() {
		if err != nil {
			tf.Close()
			os.Remove(tf.Name())
		}
	}()
	bw := bufio.NewWriterSize(tf, 1<<16)
	if err = write(bw); err != nil {
		return err
	}
	if err = bw.Flush(); err != nil {
		return err
	}
	if err = tf.Sync(); err != nil {
		return err
	}
	if err = tf.Chmod(0o644); err != nil {
		return err
	}
	if err = tf.Close(); err != nil {
		return err
	}
	if err = os.Rename(tf.Name(), path); err != nil {
		return err
	}
	return syncDir(dir)
}

// writeOutputs writes files into dir all or nothing in one call, for a
// command whose files are ready before the folder needs checking.
func writeOutputs(dir string, files []outFile, force bool, ios *IO) error {
	names := make([]string, len(files))
	for i, f := range files {
		names[i] = f.name
	}
	o, err := openOutput(dir, names, force, ios)
	if err != nil {
		return err
	}
	defer o.close()
	return o.write(files)
}

func writeFileSynced(path string, data []byte) error {
	f, err := os.OpenFile(path, os.O_WRONLY|os.O_CREATE|os.O_TRUNC, 0o644)
	if err != nil {
		return err
	}
	if _, err := f.Write(data); err != nil {
		f.Close()
		return err
	}
	if err := f.Sync(); err != nil {
		f.Close()
		return err
	}
	return f.Close()
}

// readLines returns the lines of a small file and whether it exists.
func readLines(path string) ([]string, bool) {
	f, err := os.Open(path)
	if err != nil {
		return nil, false
	}
	defer f.Close()
	b, _ := io.ReadAll(io.LimitReader(f, 1<<16))
	return strings.Split(strings.TrimSpace(string(b)), "\n"), true
}

// mkdirParents creates dir and its missing parents and returns those it
// created, outermost first.
func mkdirParents(dir string) ([]string, error) {
	var missing []string
	for d := dir; ; d = filepath.Dir(d) {
		if _, err := os.Stat(d); err == nil {
			break
		} else if !errors.Is(err, fs.ErrNotExist) {
			return nil, err
		}
		missing = append(missing, d)
		if filepath.Dir(d) == d {
			break
		}
	}
	slices.Reverse(missing)
	for i, d := range missing {
		if err := os.Mkdir(d, 0o755); err != nil && !errors.Is(err, fs.ErrExist) {
			for j := i - 1; j >= 0; j-- {
				os.Remove(missing[j])
			}
			return nil, err
		}
	}
	return missing, nil
}

func exists(p string) bool {
	_, err := os.Lstat(p)
	return err == nil
}

// removeAllRetry removes a staging folder that renderers may still be
// writing into (on an interrupt): a file made between the listing and the
// removal of the folder makes one pass fail, so it tries again.
func removeAllRetry(p string) {
	for i := 0; i < 20; i++ {
		if os.RemoveAll(p) == nil {
			return
		}
	}
}

// globQuote escapes the pattern characters of a file name.
func globQuote(s string) string {
	var b strings.Builder
	for _, r := range s {
		if strings.ContainsRune(`*?[]\`, r) {
			b.WriteByte('\\')
		}
		b.WriteRune(r)
	}
	return b.String()
}

func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !errors.Is(err, os.ErrInvalid) && !errors.Is(err, syscall.EINVAL) {
		return fmt.Errorf("syncing %s: %w", dir, err)
	}
	return nil
}

func joinList(ps []string) string {
	switch len(ps) {
	case 1:
		return ps[0]
	case 2:
		return ps[0] + " and " + ps[1]
	}
	s := ""
	for i, p := range ps {
		switch {
		case i == len(ps)-1:
			s += ", and " + p
		case i > 0:
			s += ", " + p
		default:
			s = p
		}
	}
	return s
}

func plural1(n int) string {
	if n == 1 {
		return "s"
	}
	return ""
}

func them(n int) string {
	if n == 1 {
		return "it"
	}
	return "them"
}

// linkRename renames src to dst unless dst exists, with a hard link (which
// never replaces) and the removal of src.
func linkRename(src, dst string) error {
	if err := os.Link(src, dst); err != nil {
		return err
	}
	return os.Remove(src)
}

// sameFile reports whether the open file f is still the file at path.
func sameFile(f *os.File, path string) bool {
	a, err := f.Stat()
	if err != nil {
		return false
	}
	b, err := os.Stat(path)
	return err == nil && os.SameFile(a, b)
}
