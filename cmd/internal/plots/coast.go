package plots

import (
	"errors"
	"fmt"
	"image/color"
	"math"
	"os"
	"path/filepath"
	"sync"

	"gonum.org/v1/plot"
	"gonum.org/v1/plot/vg"
	"gonum.org/v1/plot/vg/draw"

	"github.com/warmrain/warmrain/grid"
)

// Coastlines come from GSHHG (Wessel and Smith 1996) as packaged for Debian in
// gmt-gshhg-low: the "binned" netCDF files binned_GSHHS_{c,l,i}.nc (crude, low and
// intermediate resolution) under /usr/share/gmt-gshhg, read here with the project's
// own netCDF layer (package grid). No other map library is needed: the files are
// small (0.14, 0.55 and 2.2 MB) and their layout is simple. See doc/maps.md#coastlines.
//
// Layout of a binned file (as written by the GSHHG processing; variable names are the
// file's own): the globe is cut into square bins of Bin_size_in_minutes, numbered
// row by row from the north-west corner (N_bins_in_360_longitude_range per row). Bin b
// has N_segments_in_a_bin[b] segments starting at Id_of_first_segment_in_a_bin[b].
// Segment s packs its point count, level and exit/entry sides in
// Embedded_npts_levels_exit_entry_for_a_segment[s]: count = v >> 9, level =
// (v >> 6) & 7 (1 = the land/sea shore, 2 lakes, 3 islands in lakes, 4 ponds, 6 the
// Antarctic grounding line), and its points start at Id_of_first_point_in_a_segment[s].
// A point is two unsigned 16-bit offsets from the bin's south-west corner in units of
// bin size / 65535 (stored as signed shorts). Segments end on the bin's sides, so
// drawing each segment as a line gives the whole coast without joining polygons.

// CoastlineDir is the folder searched for the GSHHG binned files (Debian package
// gmt-gshhg-low). Tests may point it elsewhere.
var CoastlineDir = "/usr/share/gmt-gshhg"

// CoastColor is the colour of coastlines: black, which neither colour map reaches
// (tested), under a thin white halo that keeps it visible on the darkest colours.
var CoastColor = color.NRGBA{A: 0xff}

// coastResolution picks the GSHHG resolution letter for a map whose larger side spans
// span degrees: crude above 60°, low above 15°, intermediate below (the three the
// package ships; the tolerances of their line simplification are about 25, 5 and 1 km,
// so a 900 px map never shows their steps; common practice).
func coastResolution(span float64) byte {
	switch {
	case span > 60:
		return 'c'
	case span > 15:
		return 'l'
	default:
		return 'i'
	}
}

// coastSegment is one shore segment in degrees (longitude within its bin's 0..360 range).
type coastSegment struct {
	lon, lat []float64
}

// coastBin is one bin with shore segments.
type coastBin struct {
	lonSW, latSW float64
	segs         []coastSegment
}

type coastData struct {
	size float64 // bin size, degrees
	bins []coastBin
}

var (
	coastMu    sync.Mutex
	coastCache = map[string]*coastData{}
	coastErr   = map[string]error{}
)

// coastFile returns the path of the binned shore file of resolution res.
func coastFile(res byte) string {
	return filepath.Join(CoastlineDir, "binned_GSHHS_"+string(res)+".nc")
}

// loadCoast reads (once per file) the land/sea shore segments of resolution res.
func loadCoast(res byte) (*coastData, error) {
	path := coastFile(res)
	coastMu.Lock()
	defer coastMu.Unlock()
	if d, ok := coastCache[path]; ok {
		return d, nil
	}
	if err, ok := coastErr[path]; ok {
		return nil, err
	}
	d, err := readCoast(path)
	if err != nil {
		coastErr[path] = err
		return nil, err
	}
	coastCache[path] = d
	return d, nil
}

func readCoast(path string) (*coastData, error) {
	if _, err := os.Stat(path); err != nil {
		return nil, fmt.Errorf("coastline file %s: %w", path, err)
	}
	r, err := grid.OpenReader(path)
	if err != nil {
		return nil, err
	}
	defer r.Close()
	read := func(name string) ([]float64, error) {
		d, _, err := r.Read(name, nil, nil)
		return d, err
	}
	var v = map[string][]float64{}
	for _, n := range []string{"Bin_size_in_minutes", "N_bins_in_360_longitude_range", "N_bins_in_file",
		"Id_of_first_segment_in_a_bin", "N_segments_in_a_bin", "Embedded_npts_levels_exit_entry_for_a_segment",
		"Id_of_first_point_in_a_segment", "Relative_longitude_from_SW_corner_of_bin", "Relative_latitude_from_SW_corner_of_bin"} {
		if v[n], err = read(n); err != nil {
			return nil, err
		}
	}
	bad := func(what string) error {
		return &grid.VarError{File: path, Problem: "is not a GSHHG binned shore file as expected: " + what, Err: grid.ErrLayout}
	}
	if len(v["Bin_size_in_minutes"]) != 1 || len(v["N_bins_in_360_longitude_range"]) != 1 {
		return nil, bad("bin size or bin count is not a scalar")
	}
	size := v["Bin_size_in_minutes"][0] / 60
	nx := int(v["N_bins_in_360_longitude_range"][0])
	first, nseg := v["Id_of_first_segment_in_a_bin"], v["N_segments_in_a_bin"]
	info, start := v["Embedded_npts_levels_exit_entry_for_a_segment"], v["Id_of_first_point_in_a_segment"]
	dx, dy := v["Relative_longitude_from_SW_corner_of_bin"], v["Relative_latitude_from_SW_corner_of_bin"]
	if !(size > 0) || nx < 1 || math.Abs(float64(nx)*size-360) > 1e-9 || len(first) != len(nseg) || len(info) != len(start) || len(dx) != len(dy) {
		return nil, bad("inconsistent bin, segment or point arrays")
	}
	// The offsets are unsigned 16-bit numbers stored as shorts: -32768..-1 stand for
	// 32768..65535. The file has no _FillValue, so the netCDF default fill of shorts,
	// -32767, is read as missing (NaN): it stands for 32769.
	unsigned := func(x float64) float64 {
		if math.IsNaN(x) {
			return 32769
		}
		if x < 0 {
			return x + 65536
		}
		return x
	}
	step := size / 65535
	d := &coastData{size: size}
	for b := range first {
		n := int(nseg[b])
		if n == 0 {
			continue
		}
		bin := coastBin{lonSW: float64(b%nx) * size, latSW: 90 - float64(b/nx+1)*size}
		for s := int(first[b]); s < int(first[b])+n; s++ {
			if s < 0 || s >= len(info) {
				return nil, bad(fmt.Sprintf("bin %d names segment %d of %d", b, s, len(info)))
			}
			pk := int64(info[s])
			if (pk>>6)&7 != 1 { // the land/sea shore only
				continue
			}
			np, p0 := int(pk>>9), int(start[s])
			if p0 < 0 || np < 2 || p0+np > len(dx) {
				continue
			}
			seg := coastSegment{lon: make([]float64, np), lat: make([]float64, np)}
			for k := 0; k < np; k++ {
				seg.lon[k] = bin.lonSW + unsigned(dx[p0+k])*step
				seg.lat[k] = bin.latSW + unsigned(dy[p0+k])*step
			}
			bin.segs = append(bin.segs, seg)
		}
		if len(bin.segs) > 0 {
			d.bins = append(d.bins, bin)
		}
	}
	return d, nil
}

// CoastlinesAvailable returns nil when the coastline files are readable, else an error
// saying what is missing and which Debian package provides them. Maps draw without
// coastlines when they are not.
func CoastlinesAvailable() error {
	if _, err := loadCoast('c'); err != nil {
		return fmt.Errorf("%w (install the Debian package gmt-gshhg-low)", err)
	}
	return nil
}

// ErrNoCoastlines wraps the reason coastlines are off.
var ErrNoCoastlines = errors.New("plots: no coastlines")

// coastLines returns the shore segments that fall in the box xmin..xmax (longitude,
// possibly beyond ±180 on a map across the antimeridian), ymin..ymax, each shifted by a
// multiple of 360° into the box's longitudes.
func coastLines(xmin, xmax, ymin, ymax float64) ([]coastSegment, error) {
	d, err := loadCoast(coastResolution(math.Max(xmax-xmin, ymax-ymin)))
	if err != nil {
		if d, err = loadCoast('c'); err != nil {
			return nil, err
		}
	}
	var out []coastSegment
	for _, b := range d.bins {
		if b.latSW >= ymax || b.latSW+d.size <= ymin {
			continue
		}
		for _, shift := range []float64{-720, -360, 0, 360} {
			w := b.lonSW + shift
			if w >= xmax || w+d.size <= xmin {
				continue
			}
			for _, s := range b.segs {
				if shift == 0 {
					out = append(out, s)
					continue
				}
				t := coastSegment{lon: make([]float64, len(s.lon)), lat: s.lat}
				for i, l := range s.lon {
					t.lon[i] = l + shift
				}
				out = append(out, t)
			}
		}
	}
	return out, nil
}

// coastPlotter draws shore segments over the map's raster, clipped to the data area.
type coastPlotter struct{ segs []coastSegment }

func (cp coastPlotter) Plot(c draw.Canvas, p *plot.Plot) {
	trX, trY := p.Transforms(&c)
	halo := draw.LineStyle{Color: color.NRGBA{R: 0xff, G: 0xff, B: 0xff, A: 0xb0}, Width: px(4)}
	line := draw.LineStyle{Color: CoastColor, Width: px(2)} // 2 px: at least one pixel fully covered across the line
	var lines [][]vg.Point
	for _, s := range cp.segs {
		pts := make([]vg.Point, len(s.lon))
		for i := range s.lon {
			pts[i] = vg.Point{X: trX(s.lon[i]), Y: trY(s.lat[i])}
		}
		lines = append(lines, c.ClipLinesXY(pts)...)
	}
	for _, st := range []draw.LineStyle{halo, line} {
		for _, l := range lines {
			if len(l) > 1 {
				c.StrokeLines(st, l)
			}
		}
	}
}
