"""Reference conversions of local offsets to WGS 84 longitude/latitude.

For each origin and local offset (x east-ish, y north-ish, rotated by the
bearing of the local y axis) the destination is the geodesic direct problem
solved by GeographicLib (C. F. F. Karney, "Algorithms for geodesics",
J. Geodesy 87, 43-55, 2013) on WGS 84: start at the origin, azimuth
atan2(east, north), distance hypot(east, north). Offsets and origins are
invented. Run: pip install geographiclib==2.1 && python3 generate.py
"""
import json, math
from importlib.metadata import version
from geographiclib.geodesic import Geodesic

cases = []
origins = [(0.0, 0.0), (9.19, 45.46), (-3.7, 40.4), (18.07, 59.33), (151.2, -33.87), (-122.4, 37.77)]
offsets = [(0, 100), (250, 0), (-400, 300), (700, -700), (1000, 0), (0, -1000), (1400, 1400), (-2000, 50)]
for lon0, lat0 in origins:
    for bearing in (0.0, 30.0, -115.0):
        for x, y in offsets:
            th = math.radians(bearing)
            east = x * math.cos(th) + y * math.sin(th)
            north = -x * math.sin(th) + y * math.cos(th)
            azi = math.degrees(math.atan2(east, north))
            d = math.hypot(east, north)
            r = Geodesic.WGS84.Direct(lat0, lon0, azi, d)
            cases.append({"origin_lon_deg": lon0, "origin_lat_deg": lat0, "y_axis_bearing_deg": bearing,
                          "x_m": x, "y_m": y, "lon_deg": r["lon2"], "lat_deg": r["lat2"], "distance_m": d})
with open("fixture.json", "w") as f:
    json.dump({"source": f"geographiclib {version('geographiclib')}, Geodesic.WGS84.Direct", "cases": cases}, f, indent=1)
print(len(cases), "cases")
