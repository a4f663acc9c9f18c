package mmio

import (
	"errors"
	"runtime"
	"strings"
	"testing"

	"semiflow/numerics/memguard"
)

// allocated returns the bytes allocated while f runs.
func allocated(f func()) uint64 {
	var a, b runtime.MemStats
	runtime.ReadMemStats(&a)
	f()
	runtime.ReadMemStats(&b)
	return b.TotalAlloc - a.TotalAlloc
}

// TestDeclaredSizeGuard: the size line is checked against the memory guard
// before any entry is read. A header declaring 10¹²×10¹² once ran the
// process out of memory (the row pointers alone are 8 TB); now it is a
// guard error, found after reading two lines. Sizes by arithmetic:
// 10¹² row pointers × 8 B = 8e12 B ≈ 7.3 TiB; 10⁹ declared entries × 40 B
// = 4e10 B ≈ 37 GiB; a 10⁵×10⁵ array × 32 B = 3.2e11 B ≈ 298 GiB; the
// largest int64 n as rows and symmetric entries: n·(2·40 + 8) B ≈ 8.1e20 B
// ≈ 704 EiB, formed in floating point without overflow.
func TestDeclaredSizeGuard(t *testing.T) {
	old := memguard.SetLimit(1 << 30)
	defer memguard.SetLimit(old)
	for _, tc := range []struct{ name, src, what, need string }{
		{"rows", "%%MatrixMarket matrix coordinate real general\n1000000000000 1000000000000 1\n1 1 1\n",
			"the 1000000000000×1000000000000 coordinate matrix with 1 entry declared on line 2", "7.3 TiB"},
		{"entries", "%%MatrixMarket matrix coordinate real general\n% a comment\n10 10 1000000000\n1 1 1\n",
			"the 10×10 coordinate matrix with 1000000000 entries declared on line 3", "37 GiB"},
		{"array", "%%MatrixMarket matrix array real general\n100000 100000\n1\n",
			"the 100000×100000 array matrix declared on line 2", "298 GiB"},
		{"overflow", "%%MatrixMarket matrix coordinate pattern symmetric\n9223372036854775807 9223372036854775807 9223372036854775807\n",
			"the 9223372036854775807×9223372036854775807 coordinate matrix", "704 EiB"},
	} {
		t.Run(tc.name, func(t *testing.T) {
			var m *Matrix
			var err error
			bytes := allocated(func() { m, err = Read(strings.NewReader(tc.src)) })
			if m != nil || !errors.Is(err, memguard.ErrTooLarge) {
				t.Fatalf("Read: %v, %v; want a memory guard error", m, err)
			}
			if !strings.Contains(err.Error(), tc.what) || !strings.Contains(err.Error(), "needs "+tc.need) || !strings.Contains(err.Error(), "limit is 1.0 GiB") {
				t.Errorf("message %q, want %q, needs %s, limit is 1.0 GiB", err, tc.what, tc.need)
			}
			if bytes > 1<<20 {
				t.Errorf("refusing the header allocated %d bytes, want under 1 MiB", bytes)
			}
		})
	}
}

// TestDeclaredEntriesNotPreallocated: a header may declare more entries
// than the file holds; storage grows with the entries that arrive, so a
// 10⁷-entry claim (400 MB, allowed) on a two-entry file costs kilobytes.
func TestDeclaredEntriesNotPreallocated(t *testing.T) {
	src := "%%MatrixMarket matrix coordinate real general\n5 5 10000000\n1 1 1\n2 2 2\n"
	var err error
	bytes := allocated(func() { _, err = Read(strings.NewReader(src)) })
	var pe *ParseError
	if !errors.As(err, &pe) || pe.Line != 4 || !strings.Contains(pe.Msg, "end of file after 2 of 10000000 entries") {
		t.Errorf("error %v, want the end of file after 2 of 10000000 entries at line 4", err)
	}
	if bytes > 1<<20 {
		t.Errorf("a two-entry file declaring 1e7 entries allocated %d bytes, want under 1 MiB", bytes)
	}
}
