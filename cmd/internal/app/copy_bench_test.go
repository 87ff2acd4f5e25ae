package app

import (
	"fmt"
	"math"
	"reflect"
	"testing"

	"github.com/warmrain/warmrain/microphys"
)

// BenchmarkCopyBlock is compute's copy of every diagnostic out of the blocks of
// model outputs (outputCopies.copyBlock) for the computeBlock of 2048 columns
// grid.Process hands out, in blocks of 64 to 256 columns (outBlock), on
// invented values.
func BenchmarkCopyBlock(b *testing.B) {
	defs, _ := selectOutputs("all", microphys.DefaultParams())
	oc := newOutputCopies(defs)
	const n = 2048
	outs := make([][]float64, len(defs)+1)
	for k := range outs {
		outs[k] = make([]float64, n)
	}
	var ob [256]microphys.Outputs
	for x := range ob {
		v := reflect.ValueOf(&ob[x]).Elem()
		for f := range v.NumField() {
			if v.Field(f).Kind() == reflect.Float64 {
				v.Field(f).SetFloat(math.Sin(float64(x*31 + f)))
			}
		}
	}
	for _, blk := range []int{64, 128, 256} {
		b.Run(fmt.Sprintf("block=%d", blk), func(b *testing.B) {
			for b.Loop() {
				for lo := 0; lo < n; lo += blk {
					oc.copyBlock(outs, ob[:blk], lo)
				}
			}
			b.ReportMetric(float64(b.Elapsed().Nanoseconds())/float64(b.N*n*len(oc.gets)), "ns/value")
		})
	}
}
