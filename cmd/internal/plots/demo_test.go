package plots

import (
	"bytes"
	"flag"
	"fmt"
	"math"
	"math/rand/v2"
	"os"
	"path/filepath"
	"testing"
	"time"

	"github.com/warmrain/warmrain/cmd/internal/summary"
)

// -plotdir writes the test pictures to a folder for viewing (never the source tree):
//
//	go test ./cmd/internal/plots/ -run Demo -plotdir /tmp/warmrain-plots
var plotDir = flag.String("plotdir", "", "write demo PNGs into this folder")

func save(t *testing.T, name string, b []byte) {
	t.Helper()
	if *plotDir == "" {
		return
	}
	if err := os.MkdirAll(*plotDir, 0o755); err != nil {
		t.Fatal(err)
	}
	if err := os.WriteFile(filepath.Join(*plotDir, name), b, 0o644); err != nil {
		t.Fatal(err)
	}
}

// demoScene is an invented stratocumulus-deck scenario off a west coast: a 1-degree grid
// 40°S..0°, 110°W..70°W with LWP rising offshore and a NaN block (screened columns).
func demoScene() (summary.Scene, summary.Field, summary.Field) {
	s := summary.Scene{NY: 40, NX: 40, NT: 1}
	for y := 0; y < s.NY; y++ {
		s.Lat = append(s.Lat, -39.5+float64(y))
	}
	for x := 0; x < s.NX; x++ {
		s.Lon = append(s.Lon, 250.5+float64(x)) // 0..360 convention
	}
	lwp := summary.Field{Name: "lwp", Units: "kg m-2", LongName: "liquid water path", Data: make([]float64, s.NY*s.NX)}
	rate := summary.Field{Name: "cloud_base_drizzle_rate", Units: "kg m-2 s-1", LongName: "cloud-base drizzle rate", Data: make([]float64, s.NY*s.NX)}
	for y := 0; y < s.NY; y++ {
		for x := 0; x < s.NX; x++ {
			k := y*s.NX + x
			l := 0.04 + 0.2*math.Exp(-float64(x)/15)*(1+0.5*math.Sin(float64(y)/4))
			lwp.Data[k] = l
			rate.Data[k] = 0.37 * math.Pow(l*1e3/100, 1.75) / 86400 * math.Exp(-float64(39-x)/8)
			if y > 25 && y < 32 && x > 5 && x < 14 {
				lwp.Data[k], rate.Data[k] = math.NaN(), math.NaN()
			}
		}
	}
	return s, lwp, rate
}

func TestDemoPictures(t *testing.T) {
	if testing.Short() {
		t.Skip("slow: full tier only (make check); go test -short leaves it out")
	}
	s, lwp, rate := demoScene()
	tm := time.Date(2026, 7, 14, 12, 0, 0, 0, time.UTC)
	var buf bytes.Buffer
	if err := Map(&buf, s, lwp, MapOptions{Time: tm, Params: "demo scenario, 1° grid"}); err != nil {
		t.Fatal(err)
	}
	save(t, "map_lwp.png", buf.Bytes())
	buf.Reset()
	if err := Map(&buf, s, rate, MapOptions{Time: tm, Log: true, ColorMap: Cividis(), Params: "Comstock et al. (2004) law, KK2000 autoconversion"}); err != nil {
		t.Fatal(err)
	}
	save(t, "map_rate_log_cividis.png", buf.Bytes())

	// time mean over three invented hourly scenes, and its count map
	m, err := summary.NewMaps(nil, summary.Window{})
	if err != nil {
		t.Fatal(err)
	}
	for h := 0; h < 3; h++ {
		s.Time = []float64{float64(tm.Add(time.Duration(h) * time.Hour).Unix())}
		rr := rate
		rr.Data = append([]float64(nil), rate.Data...)
		for k := range rr.Data {
			if (k+h)%7 == 0 {
				rr.Data[k] = math.NaN() // screened now and then
			}
		}
		if err := m.Accumulate(s, rr); err != nil {
			t.Fatal(err)
		}
	}
	ms := m.Result()
	when := fmt.Sprintf("mean of %s to %s (%d steps)", time.Unix(int64(ms.TimeMin), 0).UTC().Format("2006-01-02 15:04"),
		time.Unix(int64(ms.TimeMax), 0).UTC().Format("15:04 UTC"), ms.Steps)
	buf.Reset()
	if err := Map(&buf, ms.Grid, ms.Maps[0].Mean, MapOptions{When: when, Log: true}); err != nil {
		t.Fatal(err)
	}
	save(t, "map_timemean_rate.png", buf.Bytes())
	buf.Reset()
	if err := Map(&buf, ms.Grid, ms.Maps[0].CountField(), MapOptions{When: when, Scale: 1, Units: "number of values"}); err != nil {
		t.Fatal(err)
	}
	save(t, "map_timemean_count.png", buf.Bytes())

	res := demoResult(t, 20)
	buf.Reset()
	if err := POPCurves(&buf, res, CurveOptions{Subtitle: "demo scenario, 200 000 columns"}); err != nil {
		t.Fatal(err)
	}
	save(t, "pop_lwp.png", buf.Bytes())
	buf.Reset()
	if err := SusceptibilityCurves(&buf, res, CurveOptions{Subtitle: "demo scenario"}); err != nil {
		t.Fatal(err)
	}
	save(t, "susceptibility.png", buf.Bytes())
}

// demoResult summarises invented columns: LWP and N_d log-uniform, a column drizzles
// with probability POP = min(1, 0.1 (LWP/100 g m-2)^1.2 (N_d/100 cm-3)^-0.6), and then
// has the Comstock et al. (2004) rate (doc/science.md#drizzle-rate, from memory).
func demoResult(t *testing.T, boot int) *summary.Result {
	t.Helper()
	const n = 200000
	r := rand.New(rand.NewPCG(1, 1))
	s := summary.Scene{Lat: []float64{0}, Lon: make([]float64, n), NY: 1, NX: n, NT: 1}
	c := summary.Columns{LWP: summary.Field{Data: make([]float64, n)}, Nd: summary.Field{Data: make([]float64, n)},
		POP: summary.Field{Data: make([]float64, n)}, Rate: summary.Field{Data: make([]float64, n)}}
	for k := 0; k < n; k++ {
		lwp := 0.02 * math.Exp(r.Float64()*math.Log(25))
		nd := 10e6 * math.Exp(r.Float64()*math.Log(100))
		c.LWP.Data[k], c.Nd.Data[k] = lwp, nd
		if r.Float64() < math.Min(1, 0.1*math.Pow(lwp/0.1, 1.2)*math.Pow(nd/100e6, -0.6)) {
			c.POP.Data[k] = 1
			c.Rate.Data[k] = 0.37 * math.Pow(lwp*1e3/(nd*1e-6), 1.75) / 86400
		}
	}
	a, err := summary.New(summary.Options{Bootstrap: boot, Seed: 1})
	if err != nil {
		t.Fatal(err)
	}
	if err := a.Add(s, &c); err != nil {
		t.Fatal(err)
	}
	return a.Result()
}
