"""Reference conversions of local offsets up to 10 km to WGS 84 lon/lat.

Pinned: geographiclib==2.1 (the newest 2.x on PyPI when this was made).
Run:    pip install geographiclib==2.1 && python3 generate_10km.py
Writes: direct-10km.json (offline afterwards; the Rust tests need no Python).

Each case is a local point (x, y) in metres in a site frame whose +y axis
points at `y_axis_bearing_deg` clockwise from true north. The destination is
the geodesic direct problem solved by GeographicLib (C. F. F. Karney,
"Algorithms for geodesics", J. Geodesy 87, 43-55, 2013) on WGS 84: start at
the origin, azimuth bearing + atan2(x, y), distance hypot(x, y). Origins,
bearings and offsets are invented: latitudes 0 to 70 degrees in both
hemispheres, one origin just west of the antimeridian (its eastward cases
cross it), bearings in all four quadrants, offsets in every direction up to
10 km.
"""
import json
import math
from importlib.metadata import version

from geographiclib.geodesic import Geodesic

PINNED = "2.1"
assert version("geographiclib") == PINNED, f"run with geographiclib=={PINNED}"

LATITUDES = [0.0, 15.0, 30.0, 45.0, 60.0, 70.0, -15.0, -30.0, -45.0, -60.0, -70.0]
LONGITUDES = [0.0, 9.19, -3.7, 18.07, 151.2, -122.4, 24.9, -58.4, 139.7, -70.6, 174.8]
BEARINGS = [0.0, 37.5, -115.0, 180.0]
OFFSETS = [
    (0.0, 10000.0),
    (10000.0, 0.0),
    (-7071.07, -7071.07),
    (3000.0, -9500.0),
    (-2500.0, 4000.0),
    (6000.0, 8000.0),
    (-10000.0, 0.0),
    (0.0, -10000.0),
    (1.5, -0.7),
    (120.0, 45.0),
]
# Just west of the antimeridian at 65 degrees north: 10 km east is about
# 0.21 degrees of longitude, so eastward cases come out near -179.8.
EXTRA_ORIGINS = [(179.95, 65.0)]


def case(lon0, lat0, bearing, x, y):
    azi = bearing + math.degrees(math.atan2(x, y))
    d = math.hypot(x, y)
    r = Geodesic.WGS84.Direct(lat0, lon0, azi, d)
    return {"origin_lon_deg": lon0, "origin_lat_deg": lat0, "y_axis_bearing_deg": bearing,
            "x_m": x, "y_m": y, "lon_deg": r["lon2"], "lat_deg": r["lat2"], "distance_m": d}


origins = list(zip(LONGITUDES, LATITUDES)) + EXTRA_ORIGINS
cases = [case(lon0, lat0, b, x, y) for lon0, lat0 in origins for b in BEARINGS for x, y in OFFSETS]
with open("direct-10km.json", "w") as f:
    f.write('{"source": "geographiclib %s, Geodesic.WGS84.Direct",\n "cases": [\n' % version("geographiclib"))
    f.write(",\n".join("  " + json.dumps(c) for c in cases))
    f.write("\n ]}\n")
print(len(cases), "cases")
