package samples

import "math"

// Deterministic hash noise. Every value is a pure function of (seed, layer,
// lattice coordinates); nothing depends on evaluation order.

// mix64 is the SplitMix64 finaliser (Steele, Lea & Flood 2014), used as a
// 64-bit integer hash.
func mix64(z uint64) uint64 {
	z += 0x9e3779b97f4a7c15
	z = (z ^ (z >> 30)) * 0xbf58476d1ce4e5b9
	z = (z ^ (z >> 27)) * 0x94d049bb133111eb
	return z ^ (z >> 31)
}

// hash4 hashes a seed, a layer number and two lattice coordinates.
func hash4(seed, layer uint64, i, j int64) uint64 {
	h := mix64(seed ^ mix64(layer))
	h = mix64(h ^ uint64(i))
	return mix64(h ^ uint64(j)*0x632be59bd9b4e019)
}

// unit maps a hash to [0, 1).
func unit(h uint64) float64 { return float64(h>>11) / (1 << 53) }

// white is uncorrelated noise in [0, 1) for one grid cell.
func white(seed, layer uint64, i, j int) float64 {
	return unit(hash4(seed, layer, int64(i), int64(j)))
}

func smooth(t float64) float64 { return t * t * (3 - 2*t) }

// value is smooth value noise in [0, 1) at (x, y) in lattice units.
func value(seed, layer uint64, x, y float64) float64 {
	x0, y0 := math.Floor(x), math.Floor(y)
	i, j := int64(x0), int64(y0)
	fx, fy := smooth(x-x0), smooth(y-y0)
	v00 := unit(hash4(seed, layer, i, j))
	v10 := unit(hash4(seed, layer, i+1, j))
	v01 := unit(hash4(seed, layer, i, j+1))
	v11 := unit(hash4(seed, layer, i+1, j+1))
	a := v00 + (v10-v00)*fx
	b := v01 + (v11-v01)*fx
	return a + (b-a)*fy
}

// fbm sums three octaves of value noise; the result lies in [0, 1).
func fbm(seed, layer uint64, x, y float64) float64 {
	return (4*value(seed, layer, x, y) + 2*value(seed, layer+101, 2*x, 2*y) +
		value(seed, layer+202, 4*x, 4*y)) / 7
}

// worley returns the distances (lattice units) to the nearest and the second
// nearest of a set of jittered sites, one per lattice cell: cellular noise.
func worley(seed, layer uint64, x, y float64) (f1, f2 float64) {
	i0, j0 := int64(math.Floor(x)), int64(math.Floor(y))
	f1, f2 = math.Inf(1), math.Inf(1)
	for di := int64(-1); di <= 1; di++ {
		for dj := int64(-1); dj <= 1; dj++ {
			i, j := i0+di, j0+dj
			h := hash4(seed, layer, i, j)
			sx := float64(i) + 0.1 + 0.8*unit(h)
			sy := float64(j) + 0.1 + 0.8*unit(mix64(h))
			d := math.Hypot(x-sx, y-sy)
			switch {
			case d < f1:
				f1, f2 = d, f1
			case d < f2:
				f2 = d
			}
		}
	}
	return f1, f2
}
