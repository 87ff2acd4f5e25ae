package grid

import (
	"slices"
	"strings"
)

// Shape says how the columns of a variable are laid out horizontally.
type Shape string

// The shapes of a set of columns.
const (
	// ShapeGrid: two horizontal dimensions (y, x), a regular grid with 1-D
	// latitude and longitude, a swath with 2-D ones, or a grid without any.
	ShapeGrid Shape = "grid"
	// ShapeCells: one horizontal dimension, an unstructured mesh (ncells) or a
	// list of sites (loc, station), with 1-D auxiliary latitude and longitude or
	// none.
	ShapeCells Shape = "cells"
	// ShapeSeries: no horizontal dimension, a time series at one site (a
	// ground-based radiometer); latitude and longitude, if any, are scalars.
	ShapeSeries Shape = "series"
)

// Horizontal is what the metadata say about a variable's columns: which of its
// dimensions are horizontal and where its latitude and longitude are. It reads
// nothing but metadata.
type Horizontal struct {
	Shape Shape
	// Dims are the indices (into the variable's dimensions) of the horizontal
	// dimensions, in file order: two for a grid, one for cells, none for a series.
	Dims []int
	// Lat and Lon name the latitude and longitude variables, "" when none.
	Lat, Lon string
	// LatLonRank is the rank of Lat and Lon: 0 (a site's scalars), 1 (coordinate
	// variables of y and x, or auxiliary coordinates of cells) or 2 (a swath).
	LatLonRank int
	// Radians is true when Lat and Lon are in radians (ICON's clat and clon).
	Radians bool
	// Time is the index of the dimension whose coordinate variable is a time
	// axis (IsTimeAxis), -1 when none.
	Time int
}

// timeLike reports whether a coordinate variable (or, when v is nil, a bare
// dimension name) is a time axis.
func timeLike(name string, v *VarInfo) bool {
	if v != nil {
		u := strings.ToLower(v.Text("units"))
		if v.Text("standard_name") == "time" || strings.EqualFold(v.Text("axis"), "T") ||
			strings.Contains(u, " since ") || strings.Contains(u, " as %y") {
			return true
		}
	}
	n := strings.ToLower(name)
	return n == "time" || n == "t" || n == "times" || n == "record" || n == "valid_time"
}

// IsTimeAxis reports whether a coordinate variable is a time axis whose units
// must be read (ParseTimeAxis): units that read as a time reference, standard_name
// time or axis T. A dimension merely named time, whose coordinate has other
// units (an index), is a leading dimension without times.
func IsTimeAxis(v *VarInfo) bool {
	return LooksLikeTime(v.Text("units")) || v.Text("standard_name") == "time" || strings.EqualFold(v.Text("axis"), "T")
}

// memberLike reports whether a dimension counts ensemble members or realizations.
func memberLike(name string, v *VarInfo) bool {
	if v != nil && (v.Text("standard_name") == "realization" || strings.EqualFold(v.Text("axis"), "E")) {
		return true
	}
	switch strings.ToLower(name) {
	case "member", "members", "ens", "ensemble", "realization", "realisation", "number", "mem", "ens_member", "member_id":
		return true
	}
	return false
}

// verticalLike reports whether a dimension is a vertical axis (a column's levels
// are never separate columns, but a 2-D field may carry a length-1 level).
func verticalLike(name string, v *VarInfo) bool {
	if v != nil {
		if strings.EqualFold(v.Text("axis"), "Z") || v.Text("positive") != "" {
			return true
		}
	}
	switch strings.ToLower(name) {
	case "lev", "level", "plev", "height", "height_2m", "altitude", "z", "depth":
		return true
	}
	return false
}

func latLonUnitsRadians(v *VarInfo) bool {
	switch strings.ToLower(strings.TrimSpace(v.Text("units"))) {
	case "radian", "radians", "rad":
		return true
	}
	return false
}

// isLatName and isLonName: the names of latitude and longitude variables in
// products that give neither standard_name nor degree units (ICON's clat/clon
// are in radians).
func isLatName(n string) bool {
	switch strings.ToLower(n) {
	case "lat", "latitude", "clat", "nav_lat", "xlat", "lat_cell", "latitudes":
		return true
	}
	return false
}

func isLonName(n string) bool {
	switch strings.ToLower(n) {
	case "lon", "longitude", "clon", "nav_lon", "xlong", "lon_cell", "longitudes":
		return true
	}
	return false
}

// HorizontalOf finds the horizontal dimensions and the latitude and longitude of
// variable v from the metadata of fi (pure: it reads no data). The rules, first
// match wins:
//
//  1. 1-D coordinate variables of two of v's dimensions that are latitude and
//     longitude: a grid on those two.
//  2. 2-D latitude and longitude on two of v's dimensions (named by the
//     coordinates attribute, or found by name or standard_name): a swath on them.
//  3. 1-D latitude and longitude on one of v's dimensions, named by the
//     coordinates attribute or found by name or standard_name: cells (a mesh or
//     a list of sites); on two dimensions: a grid on them. Variables along the
//     time dimension (a ship's track) are not taken as coordinates.
//  4. Otherwise the dimensions that are not time, ensemble member or vertical
//     axes (by coordinate variable attributes or by name): the last two form a
//     grid, one alone is cells, none is a series. Scalar latitude and longitude
//     named by the coordinates attribute (a site) are kept.
func HorizontalOf(fi *FileInfo, v *VarInfo) Horizontal {
	h := Horizontal{Time: -1}
	coordOf := func(d string) *VarInfo {
		c := fi.Var(d)
		if c == nil || len(c.Dims) != 1 || c.Dims[0] != d || c.Base() != baseName(d) {
			return nil
		}
		return c
	}
	for i, d := range v.Dims {
		if c := coordOf(d); c != nil && IsTimeAxis(c) {
			h.Time = i
			break
		}
	}
	dimIndex := func(name string) int { return slices.Index(v.Dims, name) }
	setLL := func(lat, lon *VarInfo, rank int) {
		h.Lat, h.Lon, h.LatLonRank = lat.Name, lon.Name, rank
		h.Radians = latLonUnitsRadians(lat)
	}
	// 1. Coordinate variables.
	var lat1, lon1 *VarInfo
	for _, d := range v.Dims {
		c := coordOf(d)
		if c == nil {
			continue
		}
		if isLat(c) && lat1 == nil {
			lat1 = c
		} else if isLon(c) && lon1 == nil {
			lon1 = c
		}
	}
	if lat1 != nil && lon1 != nil {
		a, b := dimIndex(lat1.Name), dimIndex(lon1.Name)
		h.Shape, h.Dims = ShapeGrid, []int{min(a, b), max(a, b)}
		setLL(lat1, lon1, 1)
		return h
	}
	// 2 and 3. Auxiliary coordinates (named, then found).
	aux := []*VarInfo{}
	for _, n := range strings.Fields(v.Text("coordinates")) {
		if c := fi.Resolve(v, n); c != nil {
			aux = append(aux, c)
		}
	}
	for i := range fi.Vars {
		c := &fi.Vars[i]
		if c == v || slices.Contains(aux, c) || (len(c.Dims) == 1 && baseName(c.Dims[0]) == c.Base()) || len(c.Dims) < 1 || len(c.Dims) > 2 {
			continue
		}
		onV := true
		for _, d := range c.Dims {
			onV = onV && slices.Contains(v.Dims, d) && (h.Time < 0 || d != v.Dims[h.Time])
		}
		if onV {
			aux = append(aux, c)
		}
	}
	var lat, lon *VarInfo
	for _, rank := range []int{2, 1} {
		lat, lon = nil, nil
		for _, c := range aux {
			if len(c.Dims) != rank || !c.Type.Numeric() {
				continue
			}
			inV := true
			for _, d := range c.Dims {
				inV = inV && slices.Contains(v.Dims, d)
			}
			if !inV {
				continue
			}
			if (isLat(c) || isLatName(c.Base())) && lat == nil {
				lat = c
			} else if (isLon(c) || isLonName(c.Base())) && lon == nil {
				lon = c
			}
		}
		if rank == 1 && lat != nil && lon != nil && lat.Dims[0] != lon.Dims[0] {
			// 1-D auxiliary latitude and longitude on two dimensions: a grid.
			a, b := dimIndex(lat.Dims[0]), dimIndex(lon.Dims[0])
			h.Shape, h.Dims = ShapeGrid, []int{min(a, b), max(a, b)}
			setLL(lat, lon, 1)
			return h
		}
		if lat != nil && lon != nil && slices.Equal(lat.Dims, lon.Dims) {
			for _, d := range lat.Dims {
				h.Dims = append(h.Dims, dimIndex(d))
			}
			slices.Sort(h.Dims)
			h.Shape = ShapeGrid
			if rank == 1 {
				h.Shape = ShapeCells
			}
			setLL(lat, lon, rank)
			return h
		}
	}
	// 4. By elimination.
	var hz []int
	for i, d := range v.Dims {
		c := coordOf(d)
		if timeLike(d, c) || memberLike(d, c) || verticalLike(d, c) {
			continue
		}
		hz = append(hz, i)
	}
	if len(hz) > 2 {
		hz = hz[len(hz)-2:]
	}
	h.Dims = hz
	switch len(hz) {
	case 2:
		h.Shape = ShapeGrid
	case 1:
		h.Shape = ShapeCells
	default:
		h.Shape = ShapeSeries
	}
	// A site's scalar latitude and longitude.
	lat, lon = nil, nil
	var scalars []*VarInfo
	for _, n := range strings.Fields(v.Text("coordinates")) {
		if c := fi.Resolve(v, n); c != nil {
			scalars = append(scalars, c)
		}
	}
	for i := range fi.Vars {
		if c := &fi.Vars[i]; isLatName(c.Base()) || isLonName(c.Base()) {
			scalars = append(scalars, c)
		}
	}
	for _, c := range scalars {
		if len(c.Dims) != 0 || !c.Type.Numeric() {
			continue
		}
		if (isLat(c) || isLatName(c.Base())) && lat == nil {
			lat = c
		} else if (isLon(c) || isLonName(c.Base())) && lon == nil {
			lon = c
		}
	}
	if h.Shape == ShapeSeries && lat != nil && lon != nil {
		setLL(lat, lon, 0)
	}
	return h
}

// highestRank keeps the candidates of the highest rank: since 1-D variables are
// candidates too (a time series, a list of cells), a domain-mean series beside a
// gridded field of the same quantity does not make the choice ambiguous.
func highestRank(c []cand) []cand {
	if len(c) < 2 {
		return c
	}
	top := 0
	for _, x := range c {
		top = max(top, len(x.v.Dims))
	}
	out := c[:0:0]
	for _, x := range c {
		if len(x.v.Dims) == top {
			out = append(out, x)
		}
	}
	return out
}

// fitRank drops 1-D candidates for the other roles when LWP (or the role whose
// grid stands for it) has two or more dimensions: they are series beside the field (a domain mean, a profile), never
// on LWP's grid, and were not candidates before 1-D inputs were.
func (in *Input) fitRank(r Role, c []cand) []cand {
	ref := in.ref() // LWP, or the role whose grid stands for it
	if ref == nil || r == ref.Role {
		return c
	}
	rv := in.Info.Var(ref.Var)
	if rv == nil || len(rv.Dims) < 2 {
		return c
	}
	out := c[:0:0]
	for _, x := range c {
		if len(x.v.Dims) >= 2 {
			out = append(out, x)
		}
	}
	return out
}
