// Package microphys is the warm-rain physics of one cloud column: air and water properties,
// the terminal fall speed of drops, collision and coalescence efficiencies, the growth of a
// collector drop by continuous collection through an adiabatic cloud, the evaporation of the
// drop below cloud base, and (in the column files) the adiabatic cloud, autoconversion,
// drizzle rate, drizzle probability and the Column entry point.
//
// # Units
//
// Every value in and out is a float64 in SI base units: m (radii and diameters too, never µm),
// kg, s, K, Pa, kg m-3 for water contents, m-3 for number concentrations, 1 for ratios and
// efficiencies. Conversions happen once, outside this package.
//
// # Argument order
//
// An air state is always passed and returned pressure first, then temperature: (p, T), as
// in NewAir(p, T), AirDensity(p, T, qv), FallSpeedBeard(d, p, T), CondensationRate(p, T),
// CloudBase(p, T, h) returning (pb, tb), StandardAtmosphere(z) returning (p, T) and
// SubCloudLayer.State(z) returning (p, T, S). Other arguments of a function come before
// or after the pair as its doc comment states (a drop size first, humidity after).
//
// # Bad input
//
// The functions are pure and never panic on float input. Input outside the physical or
// stated validity range, and NaN input, give NaN output (for structs, every float field
// NaN). Each function's doc comment states its formula, the units of every argument and of
// the result, its source (a line "Reference: [Key] eq. N") and its range (a line
// "Valid: ..."); a test checks both lines. Programming errors such as mismatched slice
// lengths panic with a message starting "microphys: ".
//
// # Citations
//
// Sources are cited by keys of the form [Beard1976] (first author or authors, year). Each key
// is listed once, with the full citation and DOI, in references.go; a test checks that every
// cited key is listed and every listed key is cited. Values quoted in tests name their source
// beside the check ("derived" for closed forms worked out from the formulas, "from memory"
// for values recalled without a source at hand).
//
// # Drop physics
//
// [Air] collects the properties of one air state ([NewAir]); [Air.FallSpeed] is the Beard
// (1976) terminal speed. [CollisionKind] and [CoalescenceKind] select the efficiency laws.
// [CollectDirect] integrates a collector through a [CloudColumn] with an adaptive
// Dormand–Prince 5(4) integrator; [EvaporateDirect] follows the drop from cloud base through
// a [SubCloudLayer] to the surface. [CollectConstant] and [EvaporateConstant] run the same
// integrator on the textbook problems with closed-form solutions, for testing.
//
// Results are research diagnostics, not for operational forecasting or flight-safety
// decisions.
package microphys
