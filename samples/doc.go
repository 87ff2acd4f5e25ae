// Package samples builds warmrain's demo scenario: a synthetic, deterministic
// marine stratocumulus region laid out like a daily level-3 gridded cloud
// retrieval product, written as a netCDF-4 (classic model) file with CF-1.13
// and ACDD-1.3 metadata.
//
// Everything here is INVENTED DATA for demonstrating and testing warmrain. It
// is not an observation, a model run or a retrieval of any real scene, and it
// must not be used for science. The file says so in its global attributes.
//
// The scenario (see DefaultConfig and Config.Region): a box in the subtropical
// south-east Pacific (15°S–25°S, 85°W–75°W) on a 0.1° grid with latitude
// descending, over three daily time steps, holding
//
//   - a closed-cell stratocumulus deck (LWP about 60–120 g m-2, r_e 9–12 µm,
//     implied adiabatic N_d about 100–200 cm-3);
//   - a drizzling pocket of open cells (cellular LWP with high variance, r_e
//     16–22 µm, lower cloud fraction, implied N_d about 20–40 cm-3), drifting
//     north-west and growing from day to day;
//   - a narrow straight line of polluted cloud crossing the deck, like a ship
//     track (r_e 6.8–8 µm, similar LWP, implied N_d about 300–500 cm-3);
//   - a clear-sky corner with a thin-cloud fringe, a cold high-cloud patch
//     (cloud-top temperature far below freezing) and scattered failed
//     retrievals, for the screening tests.
//
// Texture comes from an integer hash of (seed, layer, lattice point), so every
// value depends only on its own coordinates: no map order, no goroutine order
// and no global random state is involved. Values are rounded to a fixed
// resolution before they are stored, which keeps the bytes stable.
//
// Units in memory (Fields) are the file's units: g m-2, um, 1, K, hPa, m;
// missing is NaN. All netCDF calls of Generate run on one goroutine locked to
// its OS thread, because libnetcdf is not thread-safe.
package samples
