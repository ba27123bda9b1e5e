package remap

// kahanAcc is a Neumaier compensated accumulator.
type kahanAcc struct{ s, c float64 }

func (k *kahanAcc) add(x float64) {
	t := k.s + x
	if abs(k.s) >= abs(x) {
		k.c += (k.s - t) + x
	} else {
		k.c += (x - t) + k.s
	}
	k.s = t
}

func (k *kahanAcc) sum() float64 { return k.s + k.c }

func abs(x float64) float64 {
	if x < 0 {
		return -x
	}
	return x
}
