// Package cflint is warmrain's CF lint: a checker for the CF metadata of the
// files the project writes and of the files its tests build.
//
// It reads a file's metadata through grid.Describe (so every libnetcdf call
// runs on grid's I/O thread) and applies the rules listed in Rules, each with
// an identifier, a severity and the CF / NUG section it comes from. Standard
// names are checked against a CF standard name table (v83 is the one the
// project targets; LoadTable reads its XML, gzipped or not), and units
// through a Units implementation (by default grid's UDUNITS-2 wrapper).
//
// The lint is not a full CF checker: it covers the rules in the table Rules
// (standard names and canonical units, attribute types, flag counts,
// referenced variables, bounds shapes, units strings, time units,
// Conventions and history), each with the CF section it comes from.
package cflint
