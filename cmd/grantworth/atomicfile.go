package main

import (
	"bufio"
	"errors"
	"fmt"
	"io"
	"io/fs"
	"os"
	"path/filepath"
	"sync"
)

// outFile is one output: its name in the output folder and the function
// that writes its bytes.
type outFile struct {
	name  string
	write func(io.Writer) error
}

// existingOutputs lists the outputs that already exist in dir.
func existingOutputs(dir string, names []string) ([]string, error) {
	var have []string
	for _, n := range names {
		p := filepath.Join(dir, n)
		if _, err := os.Lstat(p); err == nil {
			have = append(have, p)
		} else if !errors.Is(err, fs.ErrNotExist) {
			return nil, err
		}
	}
	return have, nil
}

// writeAll writes every file into dir all or nothing: each is rendered into
// a temporary file in dir, which is written, synced and closed; only when all
// are ready are they renamed into place, and the directory is synced. On any
// failure the temporary files are removed, and files already renamed that
// did not exist before are removed too, so a failed run leaves no partial
// output. Without force an existing output is an error and nothing is
// written.
func writeAll(dir string, files []outFile, force bool) error {
	if err := os.MkdirAll(dir, 0o755); err != nil {
		return err
	}
	names := make([]string, len(files))
	for i, f := range files {
		names[i] = f.name
	}
	existed, err := existingOutputs(dir, names)
	if err != nil {
		return err
	}
	if len(existed) > 0 && !force {
		return badInput("%s already exist%s; use --force to replace %s", joinList(existed), plural1(len(existed)), them(len(existed)))
	}
	before := map[string]bool{}
	for _, p := range existed {
		before[p] = true
	}
	// The files are rendered at the same time (a large ledger's workbook
	// and JSON each take seconds); every renderer only reads its input.
	temps := make([]string, len(files))
	errs := make([]error, len(files))
	var wg sync.WaitGroup
	for i, f := range files {
		wg.Add(1)
		go func() {
			defer wg.Done()
			temps[i], errs[i] = writeTemp(dir, f)
		}()
	}
	wg.Wait()
	cleanup := func() {
		for _, t := range temps {
			if t != "" {
				os.Remove(t)
			}
		}
	}
	for _, err := range errs {
		if err != nil {
			cleanup()
			return err
		}
	}
	var renamed []string
	for i, f := range files {
		dst := filepath.Join(dir, f.name)
		if err := os.Rename(temps[i], dst); err != nil {
			cleanup()
			for _, r := range renamed {
				if !before[r] {
					os.Remove(r)
				}
			}
			return err
		}
		renamed = append(renamed, dst)
	}
	return syncDir(dir)
}

func writeTemp(dir string, f outFile) (string, error) {
	tf, err := os.CreateTemp(dir, "."+f.name+".tmp-*")
	if err != nil {
		return "", err
	}
	name := tf.Name()
	bw := bufio.NewWriterSize(tf, 1<<16)
	if err := f.write(bw); err != nil {
		tf.Close()
		return name, fmt.Errorf("%s: %w", f.name, err)
	}
	if err := bw.Flush(); err != nil {
		tf.Close()
		return name, fmt.Errorf("writing %s: %w", name, err)
	}
	if err := tf.Sync(); err != nil {
		tf.Close()
		return name, fmt.Errorf("syncing %s: %w", name, err)
	}
	if err := tf.Chmod(0o644); err != nil {
		tf.Close()
		return name, err
	}
	return name, tf.Close()
}

func syncDir(dir string) error {
	d, err := os.Open(dir)
	if err != nil {
		return err
	}
	defer d.Close()
	if err := d.Sync(); err != nil && !errors.Is(err, os.ErrInvalid) {
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
