//go:build !linux

package terrain

// hugePage is the size a slab aims for; see slab_linux.go.
const hugePage = 2 << 20

// allocFloat32s returns n float32s from the Go heap; see slab_linux.go.
func allocFloat32s(n int) ([]float32, func()) {
	return make([]float32, n), func() {}
}
