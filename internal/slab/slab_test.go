package slab

import "testing"

func TestTakeCutsApartLists(t *testing.T) {
	var s Slab[int]
	var lists [][]int
	for n := range 300 {
		l := s.Take(n % 7)
		if len(l) != n%7 || cap(l) != n%7 {
			t.Fatalf("Take(%d): len %d cap %d", n%7, len(l), cap(l))
		}
		for i := range l {
			if l[i] != 0 {
				t.Fatalf("Take(%d)[%d] = %d, want 0", n%7, i, l[i])
			}
			l[i] = n
		}
		lists = append(lists, l)
	}
	// Appending to a list never reaches the next one.
	lists[10] = append(lists[10], -1)
	for n, l := range lists {
		for i, v := range l {
			if v != n && !(n == 10 && i == len(l)-1) {
				t.Fatalf("list %d [%d] = %d, want %d", n, i, v, n)
			}
		}
	}
	// A list longer than a block gets a block of its own.
	if l := s.Take(5000); len(l) != 5000 {
		t.Fatalf("Take(5000): len %d", len(l))
	}
}

func TestBlocksGrowTo1024(t *testing.T) {
	var s Slab[byte]
	want := []int{64, 128, 256, 512, 1024, 1024}
	for _, w := range want {
		s.Take(len(s.free) + 1) // past what is left: a new block
		if s.size != w {
			t.Fatalf("block size %d, want %d", s.size, w)
		}
	}
}
