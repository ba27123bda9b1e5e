package remap

import (
	"slices"
	"sort"
)

// sortParts sorts the indices 0..len-1 of a parts slice by key, stably.
func sortParts[T any](parts []T, key func(i int) int) {
	idx := make([]int, len(parts))
	for i := range idx {
		idx[i] = i
	}
	keys := make([]int, len(parts))
	for i := range keys {
		keys[i] = key(i)
	}
	sort.SliceStable(idx, func(a, b int) bool { return keys[idx[a]] < keys[idx[b]] })
	out := make([]T, len(parts))
	for i, j := range idx {
		out[i] = parts[j]
	}
	copy(parts, out)
}

func sortInt32(a []int32) { slices.Sort(a) }
