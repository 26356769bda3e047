"""Route import fixtures: DXF drawings written by ezdxf and GeoJSON files
written with plain json (longitude/latitude by GeographicLib), with the
coordinates each one holds, in site metres, in expected.json.

The coordinates are invented. The site-metre values in expected.json are
computed here, independently of Fluxbound, by the documented rule
local = scale * R(rotation) * (p - origin) for the drawing, and by
construction for the GeoJSON (the local points are chosen first and the
longitude/latitude obtained by GeographicLib's geodesic direct problem).

Run (fixtures are committed; this is only for regeneration):
    python3 -m venv /tmp/venv
    /tmp/venv/bin/pip install ezdxf==1.4.2 geographiclib==2.1
    /tmp/venv/bin/python generate.py
"""
import json
import math
from importlib.metadata import version

import ezdxf
from geographiclib.geodesic import Geodesic

# --- DXF: a drawing in millimetres, placed in national grid coordinates ---
# Grid origin of the site (mm) and the plan rotation the mapping states.
ORIGIN_MM = (2_600_000_000.0, 1_200_000_000.0, 0.0)
ROTATION_DEG = 30.0
SCALE = 0.001  # mm -> m ($INSUNITS = 4)


def local(p):
    """Site metres of a drawing point: scale * R(theta) * (p - origin)."""
    dx, dy = p[0] - ORIGIN_MM[0], p[1] - ORIGIN_MM[1]
    dz = (p[2] if len(p) > 2 else 0.0) - ORIGIN_MM[2]
    c, s = math.cos(math.radians(ROTATION_DEG)), math.sin(math.radians(ROTATION_DEG))
    return [SCALE * (c * dx - s * dy), SCALE * (s * dx + c * dy), SCALE * dz]


def grid(x_mm, y_mm, z_mm=0.0):
    return (ORIGIN_MM[0] + x_mm, ORIGIN_MM[1] + y_mm, z_mm)


doc = ezdxf.new("R2013")
doc.header["$INSUNITS"] = 4  # millimetres
msp = doc.modelspace()
for name in ("BUS-A", "BUS-B", "BUS-C", "RISER-N", "CABLE-A", "WORK", "DESK", "WALLS", "NOTES"):
    doc.layers.add(name)

expected_conductors = []
expected_positions = []
expected_areas = []
expected_skipped = []

# LINE x3 on BUS-A, end to start: joined into one conductor of 4 vertices.
pts = [grid(0, 0, 2500), grid(4000, 0, 2500), grid(4000, 3000, 2500), grid(7500, 3000, 2500)]
for a, b in zip(pts, pts[1:]):
    msp.add_line(a, b, dxfattribs={"layer": "BUS-A"})
expected_conductors.append({"id": "bus-a", "path": [local(p) for p in pts]})

# LWPOLYLINE, open, at an elevation of 2500 mm on BUS-B.
pts = [grid(0, 200), grid(4200, 200), grid(4200, 3200), grid(7500, 3200)]
msp.add_lwpolyline([p[:2] for p in pts], dxfattribs={"layer": "BUS-B", "elevation": 2500.0})
expected_conductors.append({"id": "bus-b", "path": [local((p[0], p[1], 2500.0)) for p in pts]})

# 2-D POLYLINE at an elevation of 2500 mm on BUS-C (elevation in its location z).
pts = [grid(0, 400), grid(4400, 400), grid(4400, 3400), grid(7500, 3400)]
pl = msp.add_polyline2d([p[:2] for p in pts], dxfattribs={"layer": "BUS-C"})
pl.dxf.elevation = (0.0, 0.0, 2500.0)
expected_conductors.append({"id": "bus-c", "path": [local((p[0], p[1], 2500.0)) for p in pts]})

# 3-D POLYLINE rising from the floor to the busbar on RISER-N.
pts = [grid(-500, 600, 0), grid(-500, 600, 1200.5), grid(0, 600, 2500), grid(7500, 600, 2500)]
msp.add_polyline3d(pts, dxfattribs={"layer": "RISER-N"})
expected_conductors.append({"id": "riser-n", "path": [local(p) for p in pts]})

# Closed LWPOLYLINE as a conductor on CABLE-A: the first vertex is repeated at the end.
pts = [grid(1000, -1000), grid(2000, -1000), grid(2000, -1500)]
msp.add_lwpolyline([p[:2] for p in pts], close=True, dxfattribs={"layer": "CABLE-A"})
expected_conductors.append({"id": "cable-a", "path": [local(p) for p in pts + [pts[0]]]})

# Closed LWPOLYLINE as an area on WORK.
pts = [grid(-1000, -2000), grid(8000, -2000), grid(8000, 5000), grid(-1000, 5000)]
msp.add_lwpolyline([p[:2] for p in pts], close=True, dxfattribs={"layer": "WORK"})
expected_areas.append({"id": "work", "polygon": [local(p)[:2] for p in pts]})

# POINTs on DESK: one on the floor (standing), one raised (3-D).
p = grid(3000, 4000, 0)
msp.add_point(p, dxfattribs={"layer": "DESK"})
expected_positions.append({"id": "desk", "at": local(p)[:2]})
p = grid(3500, 4000, 1100)
msp.add_point(p, dxfattribs={"layer": "DESK"})
expected_positions.append({"id": "desk-2", "at": local(p)})

# Unsupported or unmapped: each must be listed as skipped.
msp.add_circle(grid(5000, 5000), 300, dxfattribs={"layer": "BUS-A"})
expected_skipped.append({"what": "CIRCLE", "layer": "BUS-A"})
msp.add_text("Busbar room", dxfattribs={"layer": "NOTES"})
expected_skipped.append({"what": "TEXT", "layer": "NOTES"})
msp.add_line(grid(-1000, -2000), grid(8000, -2000), dxfattribs={"layer": "WALLS"})
expected_skipped.append({"what": "LINE", "layer": "WALLS"})
msp.add_lwpolyline([(*grid(0, -3000)[:2], 0, 0, 0.5), grid(1000, -3000)[:2]], format="xyseb", dxfattribs={"layer": "BUS-B"})
expected_skipped.append({"what": "LWPOLYLINE", "layer": "BUS-B"})
msp.add_point(grid(0, 0), dxfattribs={"layer": "BUS-A"})
expected_skipped.append({"what": "POINT", "layer": "BUS-A"})

doc.saveas("routes.dxf")

mapping = {
    "name": "ezdxf fixture",
    "frequency_hz": 50,
    "circuits": [{"id": "T1", "kind": "three_phase", "current_a": 1000}],
    "origin": list(ORIGIN_MM[:2]),
    "rotation_deg": ROTATION_DEG,
    "layers": {
        "BUS-A": {"kind": "conductor", "id": "bus-a", "circuit": "T1", "phase": "A", "radius_m": 0.02},
        "BUS-B": {"kind": "conductor", "id": "bus-b", "circuit": "T1", "phase": "B", "radius_m": 0.02},
        "BUS-C": {"kind": "conductor", "id": "bus-c", "circuit": "T1", "phase": "C", "radius_m": 0.02},
        "RISER-N": {"kind": "conductor", "id": "riser-n", "circuit": "T1", "phase": "N"},
        "CABLE-A": {"kind": "conductor", "id": "cable-a", "circuit": "T1", "phase": "A", "share": 0.5},
        "WORK": {"kind": "area", "id": "work", "height_m": 1.0, "spacing_m": 0.5},
        "DESK": {"kind": "position", "id": "desk", "heights_m": [1.0]},
    },
    "defaults": {"radius_m": 0.015},
}
with open("routes-mapping.json", "w") as f:
    json.dump(mapping, f, indent=1)

# --- GeoJSON in longitude and latitude through a georeference ---
GEOREF = {"origin_lon_deg": 8.5417, "origin_lat_deg": 47.3769, "y_axis_bearing_deg": 20.0}


def lon_lat(x, y):
    """Geodesic direct problem from the origin: distance hypot(x, y),
    azimuth bearing + atan2(x, y) (the frame convention of the site)."""
    azi = GEOREF["y_axis_bearing_deg"] + math.degrees(math.atan2(x, y))
    r = Geodesic.WGS84.Direct(GEOREF["origin_lat_deg"], GEOREF["origin_lon_deg"], azi, math.hypot(x, y))
    return [r["lon2"], r["lat2"]]


gj_line = [[10.0, 20.0, 12.0], [150.0, 20.0, 11.5], [300.0, -40.0, 12.0]]
gj_multi = [[[0.0, 0.0, 8.0], [0.0, 250.0, 8.0]], [[5.0, 0.0, 8.0], [5.0, 250.0, 8.0]]]
gj_point = [40.0, 60.0]
gj_point3 = [41.0, 61.0, 1.7]
gj_poly = [[-50.0, -50.0], [350.0, -50.0], [350.0, 300.0], [-50.0, 300.0]]
features = [
    {"type": "Feature", "properties": {"id": "ohl-a", "circuit": "L1", "phase": "A", "radius_m": 0.0125, "name": "span 1"},
     "geometry": {"type": "LineString", "coordinates": [lon_lat(x, y) + [z] for x, y, z in gj_line]}},
    {"type": "Feature", "properties": {"id": "pair", "circuit": "L1", "phase": "B"},
     "geometry": {"type": "MultiLineString", "coordinates": [[lon_lat(x, y) + [z] for x, y, z in part] for part in gj_multi]}},
    {"type": "Feature", "id": "gate", "properties": {"heights_m": [1.0, 1.5]},
     "geometry": {"type": "Point", "coordinates": lon_lat(*gj_point)}},
    {"type": "Feature", "properties": {"id": "ladder"},
     "geometry": {"type": "Point", "coordinates": lon_lat(*gj_point3[:2]) + [gj_point3[2]]}},
    {"type": "Feature", "properties": {"id": "yard", "height_m": 1.0, "spacing_m": 5.0},
     "geometry": {"type": "Polygon", "coordinates": [[lon_lat(x, y) for x, y in gj_poly + [gj_poly[0]]]]}},
    {"type": "Feature", "properties": {"id": "poles"},
     "geometry": {"type": "MultiPoint", "coordinates": [lon_lat(0, 0), lon_lat(1, 1)]}},
    {"type": "Feature", "properties": {"id": "no-circuit", "radius_m": 0.01},
     "geometry": {"type": "LineString", "coordinates": [lon_lat(0, 0), lon_lat(10, 0)]}},
]
with open("routes.geojson", "w") as f:
    json.dump({"type": "FeatureCollection", "features": features}, f, indent=1)
with open("routes-geojson-mapping.json", "w") as f:
    json.dump({"georeference": GEOREF, "frequency_hz": 50,
               "circuits": [{"id": "L1", "kind": "three_phase", "current_a": 400}],
               "defaults": {"radius_m": 0.01}}, f, indent=1)

expected = {
    "source": f"ezdxf {version('ezdxf')}, geographiclib {version('geographiclib')} (Geodesic.WGS84.Direct)",
    "dxf": {"conductors": expected_conductors, "positions": expected_positions, "areas": expected_areas,
            "skipped": expected_skipped},
    "geojson": {
        "conductors": [{"id": "ohl-a", "path": gj_line},
                       {"id": "pair-1", "path": gj_multi[0]}, {"id": "pair-2", "path": gj_multi[1]}],
        "positions": [{"id": "gate", "at": gj_point}, {"id": "ladder", "at": gj_point3}],
        "areas": [{"id": "yard", "polygon": gj_poly}],
        "skipped": [{"what": "MultiPoint", "at": "/features/5"}, {"what": "LineString", "at": "/features/6"}],
    },
}
with open("expected.json", "w") as f:
    json.dump(expected, f, indent=1)

# --- examples/busbar-room.dxf: an invented low-voltage busbar room ---
# A 1600 A busbar trunking (phases L1-L3 and N, 150 mm apart, 2.8 m above
# the floor) runs 11 m from the transformer wall along the room, then
# drops to the main board; drawn in millimetres as a CAD office would,
# with walls and labels that the import lists as skipped.
room = ezdxf.new("R2013")
room.header["$INSUNITS"] = 4
rm = room.modelspace()
for name in ("BB-L1", "BB-L2", "BB-L3", "BB-N", "AISLE", "DESK", "BOARD-FRONT", "WALLS", "LABELS"):
    room.layers.add(name)
for k, name in enumerate(("BB-L1", "BB-L2", "BB-L3", "BB-N")):
    y = 1000.0 + 150.0 * k
    rm.add_polyline3d([(0.0, y, 2800.0), (11000.0 + 150.0 * k, y, 2800.0), (11000.0 + 150.0 * k, y, 1200.0)],
                      dxfattribs={"layer": name})
rm.add_lwpolyline([(500.0, 2200.0), (12500.0, 2200.0), (12500.0, 4500.0), (500.0, 4500.0)], close=True,
                  dxfattribs={"layer": "AISLE"})
rm.add_point((4000.0, 5200.0, 0.0), dxfattribs={"layer": "DESK"})
rm.add_point((11300.0, 1900.0, 0.0), dxfattribs={"layer": "BOARD-FRONT"})
rm.add_lwpolyline([(0.0, 0.0), (13000.0, 0.0), (13000.0, 6000.0), (0.0, 6000.0)], close=True,
                  dxfattribs={"layer": "WALLS"})
rm.add_text("LV busbar 1600 A", dxfattribs={"layer": "LABELS", "insert": (1000.0, 700.0)})
room.saveas("../../../../../examples/busbar-room.dxf")
print("wrote routes.dxf, routes.geojson, mappings, expected.json and examples/busbar-room.dxf")
