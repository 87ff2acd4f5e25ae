# Writes one input of a product family (argv[1]) to argv[2] with netCDF4-python or
# xarray, then reads it back with netCDF4-python and prints, as JSON, what an
# independent reader sees: LWP (kg m-2) and r_e (m) in file order (null = missing),
# LWP's dimensions, the values of every coordinate variable an output must keep, and
# the times in seconds since 1970-01-01 UTC. The values are invented test data.
import sys, json, datetime
import numpy as np
import netCDF4
import xarray as xr

family, path = sys.argv[1], sys.argv[2]
rng = np.random.default_rng(12)
EPOCH = datetime.datetime(1970, 1, 1)


def cloud(shape):
    """LWP in g m-2 and r_e in um of a warm cloud field, some columns thin or missing."""
    lwp = rng.uniform(5, 400, shape)
    re = rng.uniform(6, 22, shape)
    flat = lwp.reshape(-1)
    flat[::17] = np.nan
    re.reshape(-1)[5::23] = np.nan
    return lwp, re


expect_time = None
if family == "icon":
    # ICON-like unstructured mesh: clat/clon in radians with cell bounds, CDO's
    # absolute time axis "day as %Y%m%d.%f", chunked and deflated like model output.
    nt, nc = 3, 600
    d = netCDF4.Dataset(path, "w", format="NETCDF4")
    d.createDimension("time", None)
    d.createDimension("ncells", nc)
    d.createDimension("vertices", 3)
    t = d.createVariable("time", "f8", ("time",))
    t.standard_name, t.units, t.calendar, t.axis = "time", "day as %Y%m%d.%f", "proleptic_gregorian", "T"
    t[:] = [20260701.0, 20260701.25, 20260702.5]
    expect_time = [(datetime.datetime(2026, 7, 1) - EPOCH).total_seconds(),
                   (datetime.datetime(2026, 7, 1, 6) - EPOCH).total_seconds(),
                   (datetime.datetime(2026, 7, 2, 12) - EPOCH).total_seconds()]
    lat = np.linspace(-0.5, 0.3, nc)
    lon = np.linspace(-1.6, -1.2, nc)
    for name, vals, sn in (("clat", lat, "latitude"), ("clon", lon, "longitude")):
        v = d.createVariable(name, "f8", ("ncells",))
        v.standard_name, v.units, v.long_name, v.bounds = sn, "radian", "center " + sn, name + "_bnds"
        v[:] = vals
        b = d.createVariable(name + "_bnds", "f8", ("ncells", "vertices"))
        b[:] = np.stack([vals - 1e-3, vals + 1e-3, vals], axis=1)
    lwp, re = cloud((nt, nc))
    v = d.createVariable("tqc", "f4", ("time", "ncells"), fill_value=np.float32(-9e33), zlib=True, chunksizes=(1, 256))
    v.standard_name, v.units, v.coordinates, v.CDI_grid_type = "atmosphere_mass_content_of_cloud_liquid_water", "kg m-2", "clat clon", "unstructured"
    v[:] = np.where(np.isnan(lwp), -9e33, lwp * 1e-3)
    v = d.createVariable("reff", "f4", ("time", "ncells"), fill_value=np.float32(-9e33), zlib=True, chunksizes=(1, 256))
    v.standard_name, v.units, v.coordinates = "effective_radius_of_cloud_liquid_water_particles_at_liquid_water_cloud_top", "m", "clat clon"
    v[:] = np.where(np.isnan(re), -9e33, re * 1e-6)
    d.CDI = "Climate Data Interface"
    d.close()
    names = ("tqc", "reff")
elif family in ("sites", "sites_loc_first"):
    # A list of sites: 1-D auxiliary lat/lon in degrees, station names, LWP packed
    # in int16 by xarray; "sites_loc_first" stores (loc, time) instead of (time, loc).
    nt, nl = 5, 9
    lwp, re = cloud((nt, nl))
    dims = ("time", "loc")
    if family == "sites_loc_first":
        lwp, re, dims = lwp.T.copy(), re.T.copy(), ("loc", "time")
    ds = xr.Dataset(
        {"lwp": (dims, lwp, {"standard_name": "atmosphere_mass_content_of_cloud_liquid_water", "units": "g m-2"}),
         "re": (dims, re.astype("f4"), {"units": "um", "long_name": "cloud-top effective radius"})},
        coords={"time": ("time", np.arange(nt) * 3.0, {"units": "hours since 2026-07-01 00:00:00", "standard_name": "time"}),
                "lat": ("loc", np.linspace(-30, 10, nl), {"standard_name": "latitude", "units": "degrees_north"}),
                "lon": ("loc", np.linspace(-100, 20, nl), {"standard_name": "longitude", "units": "degrees_east"}),
                "station_name": ("loc", np.array(["site%02d" % k for k in range(nl)], dtype="S6"), {"cf_role": "timeseries_id"})})
    enc = {"lwp": {"dtype": "int16", "scale_factor": 0.02, "add_offset": 300.0, "_FillValue": -32767}}
    ds.to_netcdf(path, engine="netcdf4", encoding=enc)
    expect_time = [(datetime.datetime(2026, 7, 1) + datetime.timedelta(hours=3.0 * k) - EPOCH).total_seconds() for k in range(nt)]
    names = ("lwp", "re")
elif family == "series":
    # A ground-based microwave radiometer at one site: LWP and r_e against time
    # only, scalar lat/lon, time in "decimal hours since midnight" with the day in
    # a global attribute.
    nt = 720
    d = netCDF4.Dataset(path, "w", format="NETCDF4")
    d.createDimension("time", None)
    t = d.createVariable("time", "f8", ("time",))
    t.units, t.long_name = "decimal hours since midnight UTC", "time"
    hours = np.arange(nt) * (24.0 / nt)
    t[:] = hours
    expect_time = [(datetime.datetime(2026, 7, 1) + datetime.timedelta(hours=float(h)) - EPOCH).total_seconds() for h in hours]
    for name, val, u in (("lat", 51.0, "degrees_north"), ("lon", 6.4, "degrees_east")):
        v = d.createVariable(name, "f4", ())
        v.units = u
        v[...] = val
    lwp, re = cloud((nt,))
    v = d.createVariable("lwp", "f4", ("time",), fill_value=np.float32(-999))
    v.units, v.long_name, v.coordinates = "g m-2", "liquid water path", "lat lon"
    v[:] = np.where(np.isnan(lwp), -999, lwp)
    v = d.createVariable("re", "f4", ("time",), fill_value=np.float32(-999))
    v.units, v.coordinates = "um", "lat lon"
    v[:] = np.where(np.isnan(re), -999, re)
    d.date = "2026-07-01"
    d.close()
    names = ("lwp", "re")
elif family == "swath":
    # A level-2 swath: 2-D latitude/longitude, no time axis.
    ny, nx = 30, 40
    y, x = np.meshgrid(np.arange(ny), np.arange(nx), indexing="ij")
    lwp, re = cloud((ny, nx))
    ds = xr.Dataset(
        {"cwp": (("scan", "pixel"), lwp, {"standard_name": "atmosphere_mass_content_of_cloud_liquid_water", "units": "g m-2"}),
         "cer": (("scan", "pixel"), re.astype("f4"), {"units": "um"})},
        coords={"latitude": (("scan", "pixel"), -20 + 0.05 * y + 0.01 * x, {"standard_name": "latitude", "units": "degrees_north"}),
                "longitude": (("scan", "pixel"), -80 + 0.05 * x, {"standard_name": "longitude", "units": "degrees_east"})})
    ds.to_netcdf(path, engine="netcdf4")
    names = ("cwp", "cer")
elif family == "members":
    # Extra leading dimensions: (time, member, lat, lon), an ensemble forecast.
    nt, nm, ny, nx = 2, 3, 6, 8
    lwp, re = cloud((nt, nm, ny, nx))
    ds = xr.Dataset(
        {"lwp": (("time", "member", "lat", "lon"), lwp, {"standard_name": "atmosphere_mass_content_of_cloud_liquid_water", "units": "g m-2"}),
         "re": (("time", "member", "lat", "lon"), re.astype("f4"), {"units": "um"})},
        coords={"time": ("time", np.array([0.0, 6.0]), {"standard_name": "time", "units": "hours since 2026-07-01 00:00:00"}),
                "member": ("member", np.arange(1, nm + 1, dtype="i4"), {"standard_name": "realization"}),
                "lat": ("lat", np.linspace(-25, -20, ny), {"standard_name": "latitude", "units": "degrees_north"}),
                "lon": ("lon", np.linspace(-90, -80, nx), {"standard_name": "longitude", "units": "degrees_east"})})
    ds.to_netcdf(path, engine="netcdf4")
    expect_time = [(datetime.datetime(2026, 7, 1) + datetime.timedelta(hours=h) - EPOCH).total_seconds() for h in (0.0, 6.0)]
    names = ("lwp", "re")
else:
    raise SystemExit("unknown family " + family)

# Read back with netCDF4-python (its own mask and scale), in SI.
d = netCDF4.Dataset(path)
scale = {"kg m-2": 1.0, "g m-2": 1e-3, "m": 1.0, "um": 1e-6}


def si(name):
    v = d.variables[name]
    a = np.ma.filled(v[:].astype("f8"), np.nan) * scale[v.units]
    return [None if np.isnan(x) else float(x) for x in a.ravel()]


lv = d.variables[names[0]]
coords = {}
for name, v in d.variables.items():
    if name in names or v.dtype.kind not in "fiu":
        continue
    coords[name] = {"dims": list(v.dimensions), "values": [float(x) for x in np.ma.filled(v[:].astype("f8"), np.nan).ravel()]}
print(json.dumps({"lwp": si(names[0]), "re": si(names[1]), "dims": list(lv.dimensions),
                  "shape": [len(d.dimensions[n]) for n in lv.dimensions], "coords": coords, "time": expect_time,
                  "lwp_name": names[0], "re_name": names[1]}))
