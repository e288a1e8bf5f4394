package e2e

import "syscall"

var sigterm = syscall.SIGTERM
