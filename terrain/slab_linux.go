package terrain

import (
	"syscall"
	"unsafe"
)

// hugePage is the size of a transparent huge page on x86-64 and arm64.
const hugePage = 2 << 20

// allocFloat32s returns n float32s of anonymous memory aligned to 2 MB and
// marked MADV_HUGEPAGE, and a function that unmaps it. Where the kernel
// grants transparent huge pages (mode "always" or "madvise"), filling it
// costs one page fault per 2 MB instead of one per 4 KB. If mapping fails it
// falls back to the Go heap, as it does for less than 2 MB.
func allocFloat32s(n int) ([]float32, func()) {
	size := n * 4
	if size < hugePage {
		return make([]float32, n), func() {}
	}
	mem, err := syscall.Mmap(-1, 0, size+hugePage, syscall.PROT_READ|syscall.PROT_WRITE, syscall.MAP_PRIVATE|syscall.MAP_ANON)
	if err != nil {
		return make([]float32, n), func() {}
	}
	off := 0
	if r := uintptr(unsafe.Pointer(&mem[0])) % hugePage; r != 0 {
		off = int(hugePage - r)
	}
	aligned := mem[off : off+size]
	_ = syscall.Madvise(aligned, syscall.MADV_HUGEPAGE) // advice only
	return unsafe.Slice((*float32)(unsafe.Pointer(&aligned[0])), n), func() { syscall.Munmap(mem) }
}
