// Package slab hands out short lists cut from larger blocks: the lists a
// large ledger keeps per grant (its tranches, their values, their
// expense) take one allocation for many grants instead of one each, and
// none of the rounding up of many small ones.
package slab

// Slab cuts lists of n elements from blocks. Each list is cut with its
// capacity, so appending to it never writes into the next; a list keeps
// only its own block alive. The blocks double from 64 elements to 1,024,
// so that a small ledger holds little more than it uses. The zero Slab
// is ready to use.
type Slab[T any] struct {
	free []T
	size int // of the last block
}

// Take is a list of n zero elements.
func (s *Slab[T]) Take(n int) []T {
	if len(s.free) < n {
		s.size = min(max(2*s.size, 64), 1024)
		s.free = make([]T, max(n, s.size))
	}
	l := s.free[:n:n]
	s.free = s.free[n:]
	return l
}
