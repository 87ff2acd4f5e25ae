package grid

import (
	"bytes"
	"fmt"
	"testing"
)

// refShuffle is HDF5's byte shuffle written out byte by byte: byte b of value
// i goes to dst[b*n+i], the bytes after the last whole value are copied.
func refShuffle(src []byte, size int) []byte {
	n := len(src) / size
	dst := make([]byte, len(src))
	for i := range n {
		for b := range size {
			dst[b*n+i] = src[i*size+b]
		}
	}
	copy(dst[n*size:], src[n*size:])
	return dst
}

// TestShuffleRoundTrip: shuffle gives the byte-by-byte shuffle and unshuffle
// reverses it, for 2-, 4- and 8-byte values, lengths with and without a tail
// of fewer than eight values and with trailing bytes (invented data).
func TestShuffleRoundTrip(t *testing.T) {
	for _, size := range []int{2, 4, 8} {
		for _, n := range []int{0, 1, 7, 8, 9, 15, 16, 17, 64, 1001} {
			for _, extra := range []int{0, 1, size - 1} {
				t.Run(fmt.Sprintf("size=%d/n=%d/extra=%d", size, n, extra), func(t *testing.T) {
					src := make([]byte, n*size+extra)
					for i := range src {
						src[i] = byte(i*151 + i/7)
					}
					want := refShuffle(src, size)
					got := make([]byte, len(src))
					shuffle(got, src, size)
					if !bytes.Equal(got, want) {
						t.Fatalf("shuffle differs from the byte-by-byte shuffle")
					}
					back := bytes.Repeat([]byte{0xa5}, len(src))
					unshuffle(back, got, size)
					if !bytes.Equal(back, src) {
						t.Fatalf("unshuffle does not reverse shuffle")
					}
				})
			}
		}
	}
}

// BenchmarkUnshuffle4 is the direct reader's unshuffle of a chunk of 1 M
// float32 values (the 4000² input's chunks are of that order): unshuffle, and
// the plain byte loop it replaced (bytewise), on invented bytes.
func BenchmarkUnshuffle4(b *testing.B) {
	const n = 1 << 20
	src := make([]byte, 4*n)
	for i := range src {
		src[i] = byte(i*151 + i/7)
	}
	dst := make([]byte, 4*n)
	b.Run("unshuffle", func(b *testing.B) {
		b.SetBytes(4 * n)
		for b.Loop() {
			unshuffle(dst, src, 4)
		}
	})
	b.Run("bytewise", func(b *testing.B) {
		b.SetBytes(4 * n)
		s0, s1, s2, s3 := src[:n], src[n:2*n], src[2*n:3*n], src[3*n:4*n]
		for b.Loop() {
			d := dst[:4*n]
			for i := range n {
				j := 4 * i
				d[j], d[j+1], d[j+2], d[j+3] = s0[i], s1[i], s2[i], s3[i]
			}
		}
	})
}
