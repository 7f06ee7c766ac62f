//go:build unix && !linux

package main

import "syscall"

func childAttr() *syscall.SysProcAttr { return nil }
