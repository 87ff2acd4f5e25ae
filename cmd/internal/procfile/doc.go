// Package procfile reads the files written by 'warmrain process' for the
// statistics of 'warmrain summary': it finds the diagnostics (every float
// variable on the grid of droplet_number, never the coordinates), the liquid
// water path (liquid_water_path, or the one variable with its standard name),
// the optional rates and cloud-base height, the QC variable and which of its
// flag_meanings words screen a column (ScreenWords), the horizontal layout
// (grid, swath, cells, series; grid.HorizontalOf) with its latitude and
// longitude in degrees, and the time axis.
//
// Values are read in blocks of time steps (Blocks, Step) of at most 64 Ki
// values, converted to the SI units of microphys.OutputDecls (SIUnits) so
// that the statistics of package summary get one set of units; screened
// columns come back as NaN with their QC set to 1. Memory is bounded by one
// block, whatever the length of the file.
//
// Errors name the file and the variable (grid.VarError).
package procfile
