package grid

import (
	"path/filepath"
	"testing"
)

// BenchmarkSample measures the unit check's sample (Input.Sample, 5000 values per role) of a
// 2000 x 2000 input chunked 512 x 512, beside one whole read of it (Input.Stats): the
// sample's cost relative to a run that reads everything.
func BenchmarkSample(b *testing.B) {
	path := filepath.Join(b.TempDir(), "sample.nc")
	if err := makeBenchInput(path, 2000, 512, 512); err != nil {
		b.Fatal(err)
	}
	in, err := Open(path, OpenOptions{})
	if err != nil {
		b.Fatal(err)
	}
	defer in.Close()
	b.Run("sample", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			if _, err := in.Sample(5000); err != nil {
				b.Fatal(err)
			}
		}
	})
	b.Run("whole", func(b *testing.B) {
		for i := 0; i < b.N; i++ {
			if _, err := in.Stats(); err != nil {
				b.Fatal(err)
			}
		}
	})
}
