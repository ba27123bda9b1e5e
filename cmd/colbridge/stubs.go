package main

import (
	"errors"

	"github.com/colbridge/colbridge/remap"
)

func isBadOptions(err error) bool { return errors.Is(err, remap.ErrBadOptions) }

func runApply(args []string, e *env) error { return usagef("apply: not available in this build") }
