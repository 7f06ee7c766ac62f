package main

import "syscall"

// childAttr makes the child receive SIGTERM, and so clear its staging
// folder and stop, if the parent dies first (say by kill -9).
func childAttr() *syscall.SysProcAttr {
	return &syscall.SysProcAttr{Pdeathsig: syscall.SIGTERM}
}
