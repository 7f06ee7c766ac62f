package main

import (
	"errors"
	"os"

	"golang.org/x/sys/unix"
)

// exchangeSupported: the kernel can exchange two folders in one rename.
const exchangeSupported = true

// errNoExchange: the file system cannot exchange folders.
var errNoExchange = errors.New("exchange not supported")

// exchange swaps the folders a and b atomically (renameat2
// RENAME_EXCHANGE, Linux 3.15 and later; ext4, xfs, btrfs, tmpfs and
// others).
func exchange(a, b string) error {
	err := unix.Renameat2(unix.AT_FDCWD, a, unix.AT_FDCWD, b, unix.RENAME_EXCHANGE)
	if errors.Is(err, unix.EINVAL) || errors.Is(err, unix.ENOSYS) || errors.Is(err, unix.EOPNOTSUPP) {
		return errNoExchange
	}
	if err != nil {
		return &os.LinkError{Op: "exchange", Old: a, New: b, Err: err}
	}
	return nil
}

// renameNoReplace renames src to dst unless dst exists (fs.ErrExist).
func renameNoReplace(src, dst string) error {
	err := unix.Renameat2(unix.AT_FDCWD, src, unix.AT_FDCWD, dst, unix.RENAME_NOREPLACE)
	if errors.Is(err, unix.EINVAL) || errors.Is(err, unix.ENOSYS) || errors.Is(err, unix.EOPNOTSUPP) {
		return linkRename(src, dst)
	}
	if err != nil {
		return &os.LinkError{Op: "rename", Old: src, New: dst, Err: err}
	}
	return nil
}
