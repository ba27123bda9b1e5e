package main

import (
	"errors"

	"github.com/colbridge/colbridge/remap"
)

func isBadOptions(err error) bool { return errors.Is(err, remap.ErrBadOptions) }
