package main

import "github.com/colbridge/colbridge/weights"

var version = weights.Version
