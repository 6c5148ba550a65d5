// Package spare keeps arrays that their owner no longer needs, so that the
// next computation of a sequence (the next step of an adaptive loop, the
// next array of a renumbering) can use them instead of allocating.
//
// A Bin is not safe for concurrent use. The zero Bin is empty and ready; a
// nil *Bin keeps nothing: Take allocates exactly what is asked and Give
// drops.
package spare

// Headroom is the usual Bin.Room for arrays that are given back to the
// bin and taken again for larger uses: an adaptive loop's meshes grow by a factor of about 1.3 per step
// with Dörfler marking at θ = 0.5, so with half as much again an array
// serves the next step too.
const Headroom = 0.5

// Bin holds spare arrays of one element type.
type Bin[T any] struct {
	// Room is the extra capacity of a new array that Take makes, as a
	// fraction of its length: Headroom for arrays that come back to the
	// bin for larger uses, 0 (exact) for arrays that leave it.
	Room float64
	// Fit, if positive, limits reuse to spare arrays whose capacity is at
	// most n·(1 + Fit) for a Take of n, so that a short array does not
	// keep a long one's memory; zero takes any spare array long enough.
	Fit float64

	free [][]T
}

// Take returns an array of length n: the spare array with the least
// capacity of at least n (and within b.Fit), or else a new one with
// capacity n·(1 + b.Room).
// Its values are those it had before: the caller sets each of them, or
// uses TakeZero.
func (b *Bin[T]) Take(n int) []T {
	if b == nil {
		return make([]T, n)
	}
	{
		best := -1
		for i, s := range b.free {
			if cap(s) >= n && (b.Fit <= 0 || float64(cap(s)) <= float64(n)*(1+b.Fit)) && (best < 0 || cap(s) < cap(b.free[best])) {
				best = i
			}
		}
		if best >= 0 {
			s := b.free[best]
			last := len(b.free) - 1
			b.free[best] = b.free[last]
			b.free[last] = nil
			b.free = b.free[:last]
			return s[:n]
		}
	}
	return make([]T, n, n+int(b.Room*float64(n)))
}

// TakeZero is Take with every value set to the zero value.
func (b *Bin[T]) TakeZero(n int) []T {
	s := b.Take(n)
	clear(s)
	return s
}

// Give puts arrays into the bin for later Takes. The caller must not use
// them afterwards. Nil arrays are ignored.
func (b *Bin[T]) Give(arrays ...[]T) {
	if b == nil {
		return
	}
	for _, s := range arrays {
		if cap(s) > 0 {
			b.free = append(b.free, s)
		}
	}
}

// Len returns the number of spare arrays held.
func (b *Bin[T]) Len() int {
	if b == nil {
		return 0
	}
	return len(b.free)
}

// Resize returns s with length n, reusing its array if its capacity is at
// least n, else a new array of capacity n. The values are not cleared: the
// caller sets each of them, or clears the result.
func Resize[T any](s []T, n int) []T {
	if n <= cap(s) {
		return s[:n]
	}
	return make([]T, n)
}

// ResizeRoom is Resize for an array that is resized again and again for
// growing uses (the setup arrays of a solver reused from step to step of
// an adaptive loop): a new array replacing one that had a capacity gets
// capacity n·(1 + Headroom), so that it serves the next, larger use too; a
// first array (s without capacity) gets exactly n.
func ResizeRoom[T any](s []T, n int) []T {
	if n <= cap(s) {
		return s[:n]
	}
	c := n
	if cap(s) > 0 {
		c += int(Headroom * float64(n))
	}
	return make([]T, n, c)
}
