//go:build !linux

package main

import "errors"

// exchangeSupported: no portable call exchanges two folders; an existing
// output folder gets its files moved in one by one, after a commit mark.
const exchangeSupported = false

var errNoExchange = errors.New("exchange not supported")

func exchange(a, b string) error { return errNoExchange }

// renameNoReplace renames src to dst unless dst exists (fs.ErrExist).
func renameNoReplace(src, dst string) error { return linkRename(src, dst) }
