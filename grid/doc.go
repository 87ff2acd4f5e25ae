// Package grid reads gridded cloud fields from netCDF files and writes column
// results back, the CF way, streaming over the grid with bounded memory. It knows
// no physics: it turns files into []float64 slabs in canonical SI units (NaN for
// missing) and slabs of results into CF-compliant netCDF-4 outputs.
//
// # Layers
//
// The package is one Go package in four layers, named by the prefix of their
// files; each layer calls only its own and lower layers.
//
//  0. Shared vocabulary, no prefix: doc.go, errors.go (sentinels, VarError),
//     types.go (Type, Attr, typed values), names.go (group paths, URLs).
//  1. Binding, c_*.go: the only cgo and the only github.com/fhs/go-netcdf calls
//     of the package. c_thread.go is the I/O thread every library call runs on;
//     c_netcdf.go fills go-netcdf's gaps over libnetcdf; c_hdf4.go reads HDF4 SD
//     through libmfhdf; c_storage.go defines variable storage; c_udunits.go wraps
//     UDUNITS-2 (Converter); c_direct_read.go and c_direct_write.go move HDF5
//     chunks directly (doc/netcdf.md#direct-chunks); c_rawbuf.go holds the raw
//     buffers the library calls read into and write from.
//  2. Generic access, store_*.go: files as metadata and stored values, with no CF
//     meaning. store_scene.go (one file, an HDF4 file or files joined with "+"),
//     store_describe.go (FileInfo, VarInfo, Describe), store_generic.go (Reader,
//     WriteDataset), store_dswriter.go (DatasetWriter), store_tempfile.go (whole
//     outputs or none), store_cdfsize.go (truncated classic files),
//     store_zarrcheck.go (NCZarr stores libnetcdf cannot read).
//  3. CF interpretation, cf_*.go: what the metadata means. cf_roles.go (roles and
//     their rule table), cf_open.go (Open: binding roles, layout), cf_decode.go
//     (packing, fill, valid range, flags), cf_quality.go (masks), cf_shape.go
//     (horizontal dimensions), cf_timeaxis.go and cf_calendar.go (time),
//     cf_cellmethods.go (cell_methods).
//  4. Pipeline, pipe_*.go: streaming an opened Input through compute into an
//     Output. pipe_slab.go (slab plan, buffers, decoded reads), pipe_process.go
//     (Process: three slabs in flight), pipe_memory.go (EstimateMemory),
//     pipe_output.go (Create, Commit), pipe_point.go (single columns, samples),
//     pipe_chunk.go (the direct writer's chunk layout of the output slab and
//     each chunk's bytes).
//
// Only binding files import "C" or go-netcdf; CF files reach the files through
// the generic layer, using from the binding only the I/O thread and UDUNITS-2;
// pipeline files leave the attributes CF interprets (units, _FillValue,
// standard_name, flags, ...) to the CF layer and take decoders and units from it.
// Types are shared across layers (the binding's HDF4 reader fills a FileInfo, the
// direct chunk I/O works on an Output); the rule is about calls. layers_test.go
// enforces it with go/parser, listing the few calls that still go upward with
// their reasons.
//
// # Threads
//
// libnetcdf is not thread-safe, and the HDF5 library under it keeps its
// error-printing switch per OS thread (which makes libnetcdf 4.9.0 print
// spurious HDF5-DIAG stacks from any thread but the first). Every libnetcdf call
// of the package therefore runs on one goroutine locked to its OS thread
// (c_thread.go), started lazily, which first calls H5Eset_auto2(H5E_DEFAULT, NULL,
// NULL). Work reaches it as closures on a channel. Real errors are still
// returned as errors. The cgo gap fillers over libnetcdf (c_netcdf.go) and the
// github.com/fhs/go-netcdf calls are only ever made from that thread. UDUNITS-2
// calls (c_udunits.go) are serialised by a mutex.
//
// # Storage
//
// An input is a scene (store_scene.go): one netCDF file with every group of it, an
// HDF4 file read through the SD interface of libmfhdf (c_hdf4.go; loaded with
// dlopen apart from libnetcdf, whose symbols it shares, and called on the same
// I/O thread), or several files of one scene joined with "+" (SceneFiles), whose
// descriptions are merged into one FileInfo: dimensions of the same name and
// length are one, coordinate variables repeated by several files must hold the
// same values. Each VarInfo carries its source (file, group or SDS) and its
// group path as its name ("/geophysical_data/cwp"); CF references between
// variables are resolved with FileInfo.Resolve (CF 1.8 §2.7). HDF4 data sets
// are unpacked the SDsetcal way, value = scale_factor * (stored - add_offset).
//
// # Inputs and roles
//
// Open(path, OpenOptions) opens a netCDF-3, netCDF-4/HDF5 file or an NCZarr store
// (file:///abs/store#mode=nczarr,file) and binds each input Role (lwp and re,
// unless the run can derive them: LWP from tau and r_e, r_e from LWP and a
// droplet number; tau, ctt, ctp, cth, cloud_fraction, lwp_sd, nd, phase and
// multilayer optional) to a variable, using the rule table RoleRules (data, not
// code), in this order:
//
//  1. an explicit Override "ROLE=VARNAME" or "ROLE=VARNAME:UNITS" (ParseOverride);
//  2. the CF standard_name (table v83, aliases included; a standard name with a
//     modifier such as "standard_error" never binds a main role);
//  3. the lower-priority standard names of older tables and of CMIP/CFMIP
//     (RoleRule.LowerNames), on the reference grid only, with Binding.Note;
//  4. a common variable name, then a generic one (case-insensitive; the first
//     name of the list that matches wins).
//
// Bounds, climatology and coordinate variables are never candidates, nor are
// retrieval uncertainties (standard_error modifier, *_unc, *_uncertainty). Two
// candidates for an optional role the run does not use (a cloud fraction for an
// in-cloud LWP, a droplet number beside r_e) give a warning (Input.Warnings), not
// an error. Input.GridMean says whether the LWP is a grid-box mean (cell_methods,
// model names or attributes, or OpenOptions.LWPKind).
//
// Masks (ParseMask, OpenOptions.Masks) bind quality variables to internal slots
// (RoleQuality1..6); the phase and multilayer roles become masks too. Input.Masks
// says, per column value, whether a mask screens it (Mask.Screens, CF flag values,
// masks or both); Input.Count and Survey count what masks and flag codes
// remove.
//
// The LWP standard deviation (lwp_sd) is recognised by an LWP standard_name with
// cell_methods containing standard_deviation, or by being named in the bound LWP
// variable's ancillary_variables with a standard_error (or standard_deviation)
// modifier, then by name. Two candidates for one role give ErrAmbiguous (listing
// them and the override syntax); a missing required role gives ErrNoVariable
// (listing what was searched). Binding.Reason says why each variable was taken.
//
// # Units
//
// Units go through UDUNITS-2: any units attribute convertible to the role's
// canonical units (kg m-2, m, 1, K, Pa, m, 1, kg m-2) is accepted and converted
// once, when decoding; a missing or non-convertible units attribute is an
// ErrUnits error unless an override declares the units. Converter factors within
// 1e-12 of a power of ten are made exact. "mb" (millibarn to UDUNITS) is refused
// for pressures with a hint to use hPa or mbar.
//
// # Decoding
//
// Every numeric stored type is read in its own type and decoded in Go (Decoder):
// _Unsigned, then _FillValue (or the library default fill for non-byte types),
// missing_value and valid_min/valid_max/valid_range tested in the packed domain,
// then scale_factor/add_offset, then the unit conversion; missing values become
// NaN. The codes of a data variable's flag_values (with flag_meanings) decode to
// FlagNaN(k), a NaN that carries the code's index (FlagIndex), before any other
// test; a packed zero left with a rounding residue decodes to 0. A _FillValue of another type than the variable (a string one included) is
// an ErrDecode error. Text attributes may be NC_CHAR or NC_STRING.
//
// # Layout
//
// All bound inputs must have exactly LWP's dimensions (else ErrLayout, "LWP and
// r_e are on different grids ..."). A column is one horizontal location at one
// index of every other dimension. HorizontalOf finds LWP's horizontal dimensions
// from the metadata: two (a grid with 1-D latitude/longitude coordinate
// variables, a swath with 2-D ones named by the coordinates attribute, or a grid
// without coordinates), one (cells: an unstructured mesh or a list of sites, with
// 1-D auxiliary latitude/longitude in degrees or radians, or none) or none (a time
// series at one site). Layout.Shape says which; the other dimensions (time,
// ensemble member, ...) are leading dimensions, possibly unlimited, in any order.
// 1-D coordinate variables must be strictly monotonic (descending latitude is
// fine) and without missing values. Zero-length dimensions are an error.
// Layout.Coords lists what an output keeps: coordinate variables, auxiliary
// coordinates, their bounds and the grid_mapping variable. The time coordinate of
// one of LWP's dimensions is read at Open (ParseTimeAxis: CF units, CDO's "day as
// %Y%m%d.%f", "<unit> since midnight" with the day in a global attribute; anything
// else is an ErrUnits error), and outputs hold it in CF units.
//
// # Slabs and memory
//
// The grid is processed in slabs, cut along LWP's last two dimensions whatever
// their meaning (a 1-D LWP is one row): one index of each other dimension and a tile
// of rows and columns aligned with LWP's chunks, within the budget
// OpenOptions.SlabBytes (default 32 MiB) counting the float64 and raw buffers of
// all inputs and outputs of one slab. A chunk that fits the budget is read whole
// (tiles of whole chunks, as many across as fit, or blocks of whole chunk rows); a
// larger chunk is read in pieces of its column (cx wide, a divisor of its height
// high when a good one exists), each column band from top to bottom before the
// next one. Contiguous and netCDF-3 inputs are read in blocks of whole rows, or in
// pieces of one row when a row exceeds the budget (a long mesh or series). Each
// input variable's chunk cache is set to hold every chunk one slab (or one row of
// slabs across a band) touches, about one chunk per variable, so each chunk is
// decompressed once and memory does not grow with the grid. Process keeps three
// slabs in flight: the I/O thread reads slab k+1 and writes slab k-1 while the
// workers decode, compute and encode slab k; only the raw buffers are held three
// times, the decoded ones once. Buffers are reused, and kept in a pool for the
// next run; nothing is allocated per slab after warm-up.
//
// # Outputs
//
// Create writes a netCDF-4 classic model file (shuffle + deflate, level 1 by
// default) to a temporary file ".<name>.tmp-<random>" in the target folder;
// Commit syncs it and renames it into place, Abort removes it. It refuses to write
// into an input (ErrInputOverwrite: same path or os.SameFile) and refuses an
// existing output unless WriteOptions.Force (ErrExists). In NewFile mode the
// output holds LWP's dimensions, Layout.Coords and the new variables; in
// CopyInput mode every input variable and global attribute too (NC_STRING
// attributes become NC_CHAR, types the classic model lacks are widened). New
// variables are chunked like one slab, (1, ..., rows, columns of a slab), in
// chunks of at most 4 MiB, with a chunk cache holding one slab's chunks, so each
// chunk is written whole and compressed once; they get _FillValue of their own
// type before any data (none with OutputVar.NoFill, for flag variables), and the
// attributes listed in OutputVar (coordinates and grid_mapping copied from LWP).
// A Uint32 variable (a bit mask) makes the output netCDF-4 rather than the classic
// model, which has no unsigned types (doc/netcdf.md#flag-types).
// Globals: Conventions "CF-1.13 ACDD-1.3", date_created, history (the new line
// first, then the input's), then WriteOptions.Globals. OutputVar.Quantize keeps N
// significant digits (Granular BitRound) and adds the CF quantization container
// "quantization_info"; such an output is written as netCDF-4 rather than the
// classic model, because libnetcdf 4.9.0 fails nc_enddef after
// nc_def_var_quantize in a classic-model file.
//
// Process(in, out, ProcessOptions, compute) runs the pipeline; compute receives
// the slab and one []float64 per output variable and fills columns [lo, hi).
// ProcessOptions.SkipCompute makes an I/O-only run (benchmarks). SlabInfo
// reports the slab plan.
//
// # Known limits
//
// The memory bound holds for any number of rows, columns, leading indices and
// files. Inputs chunked unlike LWP may have a chunk decompressed twice (by
// neighbouring bands), and blocks of whole rows of a contiguous LWP read chunked
// inputs through caches that hold a chunk row. libnetcdf 4.9.0 cannot hold unlimited dimensions in NCZarr stores, crashes
// opening an NCZarr store that holds a scalar variable (ncdump too) and reads
// compressed Zarr chunks as raw bytes: Open, Describe and OpenReader read the
// metadata of a local store first and refuse those stores (ErrZarr), and stores
// in zip or S3 storage, whose metadata cannot be checked.
//
// # Generic reading
//
// Describe(path) returns a FileInfo (dimensions, variables, types, attributes as
// Go values, chunking, compression) for tools such as the CF lint.
//
// # Errors
//
// Errors wrap the sentinels ErrNoVariable, ErrAmbiguous, ErrUnits, ErrLayout,
// ErrNotNetCDF, ErrExists, ErrInputOverwrite, ErrDecode, ErrOverride, usually
// inside a *VarError{File, Var, Problem} naming the file, the variable and what
// was expected.
package grid
