package remap

import "slices"

func sortInt32(a []int32) { slices.Sort(a) }
