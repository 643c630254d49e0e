#!/usr/bin/env python3
"""Independent reference values for the box (1 - IoU) and geodesic base distances.

Method:
    IoU of axis-aligned 2-D boxes from polygon geometry: shapely (GEOS)
        box(x1, y1, x2, y2).intersection(other).area / box(...).union(other).area,
    cross-checked against the closed form (product of the overlaps of the intervals).

    Distances between latitude/longitude points on the WGS84 ellipsoid: geographiclib,
        Geodesic.WGS84.Inverse(lat1, lon1, lat2, lon2)["s12"]
    (C. F. F. Karney, "Algorithms for geodesics", J. Geodesy 87:43-55, 2013; accurate to
    about 15 nm), and the great-circle distance on a sphere of the mean Earth radius
    R = 6,371,008.8 m computed here with the vector (Vincenty-on-sphere) formula
        angle = atan2(|n1 x n2|, n1 . n2),  n = (cos lat cos lon, cos lat sin lon, sin lat),
    which shares no code or formula with switchyard's haversine.

    The sphere and the ellipsoid disagree by a bounded ratio. On the ellipsoid with
    geodetic latitude and longitude, ds^2 = M(lat)^2 dlat^2 + N(lat)^2 cos^2(lat) dlon^2,
    with the radii of curvature between M_min = a (1 - e^2) (meridian, at the equator) and
    N_max = a^2 / b (at the poles); on the sphere ds^2 = R^2 (dlat^2 + cos^2(lat) dlon^2).
    Mapping each point to the point of the same latitude and longitude therefore scales every
    curve's length by a factor in [M_min / R, N_max / R], and so shortest paths too:
        R / N_max <= sphere / ellipsoid <= R / M_min,
    that is 0.995533 <= ratio <= 1.005614 (-0.447 % to +0.562 %). The script asserts the
    bound on every case and records the ratios seen.

Usage:
    python3 distance_reference.py            # (re)write tests/data/reference/distance_cases.json
    python3 distance_reference.py --check    # regenerate in memory, compare with the file
"""

import argparse
import json
import math
import sys
from pathlib import Path

import numpy as np
from geographiclib.geodesic import Geodesic
from shapely.geometry import box

from refcheck import compare, load, report

HERE = Path(__file__).resolve().parent
OUTPUT = HERE.parent / "data" / "reference" / "distance_cases.json"

SEED = 9_265_358
N_RANDOM_BOXES = 400
N_RANDOM_POINTS = 400
REL_TOL = 1e-12

EARTH_MEAN_RADIUS = 6_371_008.8  # m, IUGG mean radius R1 of WGS84
WGS84_A = Geodesic.WGS84.a
WGS84_F = Geodesic.WGS84.f
WGS84_B = WGS84_A * (1.0 - WGS84_F)
WGS84_E2 = WGS84_F * (2.0 - WGS84_F)
RATIO_LOW = EARTH_MEAN_RADIUS / (WGS84_A * WGS84_A / WGS84_B)  # R / N_max
RATIO_HIGH = EARTH_MEAN_RADIUS / (WGS84_A * (1.0 - WGS84_E2))  # R / M_min

SOURCE = (
    "Hand cases, then seeded random cases (numpy default_rng seed 9265358). IoU of 2-D boxes "
    "[x1, y1, x2, y2] by shapely polygon intersection and union areas; distances between "
    "[lat, lon] points in degrees: wgs84 = geographiclib Geodesic.WGS84.Inverse s12 (m), "
    "sphere = great circle on R = 6371008.8 m by atan2(|n1 x n2|, n1 . n2); written by "
    "tests/reference/distance_reference.py."
)


# --------------------------------------------------------------------------------------
# Boxes
# --------------------------------------------------------------------------------------

def shapely_iou(a, b):
    """IoU of two boxes [x1, y1, x2, y2] from polygon areas (GEOS)."""
    pa, pb = box(*a), box(*b)
    union = pa.union(pb).area
    return pa.intersection(pb).area / union


def closed_form_iou(a, b):
    """IoU from the overlaps of the intervals (cross-check)."""
    w = max(0.0, min(a[2], b[2]) - max(a[0], b[0]))
    h = max(0.0, min(a[3], b[3]) - max(a[1], b[1]))
    inter = w * h
    area_a = (a[2] - a[0]) * (a[3] - a[1])
    area_b = (b[2] - b[0]) * (b[3] - b[1])
    return inter / (area_a + area_b - inter)


def box_case(a, b, kind):
    iou = shapely_iou(a, b)
    check = closed_form_iou(a, b)
    if not math.isclose(iou, check, rel_tol=1e-12, abs_tol=1e-13):
        raise AssertionError(f"shapely {iou} != closed form {check} for {a}, {b}")
    return {"kind": kind, "a": [float(v) for v in a], "b": [float(v) for v in b], "iou": iou}


HAND_BOXES = [
    # (a, b, kind, expected IoU)
    ([0.0, 0.0, 2.0, 2.0], [1.0, 1.0, 3.0, 3.0], "hand", 1.0 / 7.0),
    ([0.0, 0.0, 4.0, 2.0], [0.0, 0.0, 4.0, 2.0], "hand", 1.0),
    ([0.0, 0.0, 4.0, 4.0], [1.0, 1.0, 3.0, 3.0], "hand", 0.25),
    ([0.0, 0.0, 1.0, 1.0], [1.0, 0.0, 2.0, 1.0], "hand", 0.0),
    ([0.0, 0.0, 1.0, 1.0], [5.0, 5.0, 6.0, 7.0], "hand", 0.0),
    ([0.0, 0.0, 2.0, 2.0], [1.0, 0.0, 3.0, 2.0], "hand", 1.0 / 3.0),
]


def hand_boxes():
    cases = []
    for a, b, kind, expected in HAND_BOXES:
        case = box_case(a, b, kind)
        if not math.isclose(case["iou"], expected, rel_tol=1e-15, abs_tol=1e-15):
            raise AssertionError(f"hand box: got {case['iou']}, expected {expected}")
        cases.append(case)
    return cases


def random_box(rng, scale, centre):
    w, h = scale * rng.uniform(0.05, 1.0, size=2)
    x, y = centre + scale * rng.uniform(-0.5, 0.5, size=2)
    return [x, y, x + w, y + h]


def random_box_pair(rng):
    scale = 10.0 ** rng.uniform(-2.0, 3.0)
    centre = scale * rng.uniform(-20.0, 20.0, size=2)
    kind = str(rng.choice(["overlap", "nested", "disjoint", "touching", "near"],
                          p=[0.45, 0.15, 0.15, 0.1, 0.15]))
    a = random_box(rng, scale, centre)
    w, h = a[2] - a[0], a[3] - a[1]
    if kind == "overlap":
        b = random_box(rng, scale, centre)
    elif kind == "nested":
        fx = np.sort(rng.uniform(0.0, 1.0, size=2))
        fy = np.sort(rng.uniform(0.0, 1.0, size=2))
        b = [a[0] + fx[0] * w, a[1] + fy[0] * h, a[0] + fx[1] * w, a[1] + fy[1] * h]
    elif kind == "disjoint":
        gap = scale * rng.uniform(0.01, 2.0)
        b = random_box(rng, scale, centre)
        shift = a[2] - b[0] + gap
        b = [b[0] + shift, b[1], b[2] + shift, b[3]]
    elif kind == "touching":
        b = random_box(rng, scale, centre)
        b = [b[0], a[3], b[2], a[3] + (b[3] - b[1])]  # b's bottom edge on a's top edge
    else:  # a slightly moved copy: IoU close to 1
        jitter = 1e-3 * scale * rng.normal(size=4)
        b = [a[0] + jitter[0], a[1] + jitter[1], a[2] + jitter[2], a[3] + jitter[3]]
    if rng.random() < 0.5:
        a, b = b, a
    return [float(v) for v in a], [float(v) for v in b], kind


# --------------------------------------------------------------------------------------
# Points on the Earth
# --------------------------------------------------------------------------------------

def unit_vector(lat, lon):
    phi, lam = math.radians(lat), math.radians(lon)
    return np.array([math.cos(phi) * math.cos(lam), math.cos(phi) * math.sin(lam), math.sin(phi)])


def sphere_distance(p, q):
    """Great circle on the mean-radius sphere by atan2(|n1 x n2|, n1 . n2)."""
    n1, n2 = unit_vector(*p), unit_vector(*q)
    cross = np.cross(n1, n2)
    return EARTH_MEAN_RADIUS * math.atan2(math.sqrt(float(cross @ cross)), float(n1 @ n2))


def point_case(p, q, kind):
    wgs84 = Geodesic.WGS84.Inverse(p[0], p[1], q[0], q[1])["s12"]
    sphere = sphere_distance(p, q)
    if wgs84 > 0.0:
        ratio = sphere / wgs84
        # 1e-9 of slack for the two computations' rounding (geographiclib: about 15 nm).
        if not (RATIO_LOW * (1 - 1e-9) <= ratio <= RATIO_HIGH * (1 + 1e-9)):
            raise AssertionError(f"sphere/ellipsoid ratio {ratio} outside the bound for {p}, {q}")
    elif sphere > 1e-6:
        raise AssertionError(f"ellipsoid distance 0 but sphere {sphere} for {p}, {q}")
    return {"kind": kind, "a": [float(v) for v in p], "b": [float(v) for v in q],
            "wgs84": float(wgs84), "sphere": float(sphere)}


HAND_POINTS = [
    # (a, b, kind, expected sphere distance)
    ([0.0, 0.0], [90.0, 0.0], "quarter meridian", math.pi / 2 * EARTH_MEAN_RADIUS),
    ([0.0, 0.0], [0.0, 180.0], "antipodes on the equator", math.pi * EARTH_MEAN_RADIUS),
    ([0.0, 0.0], [0.0, 1.0], "one degree on the equator", math.pi / 180 * EARTH_MEAN_RADIUS),
    ([45.0, 179.5], [45.0, -179.5], "across the antimeridian", None),
    ([89.5, 0.0], [89.5, 180.0], "over the pole", math.pi / 180 * EARTH_MEAN_RADIUS),
    ([-33.8688, 151.2093], [51.4700, -0.4543], "Sydney to Heathrow", None),
    ([51.5, -0.1], [51.5, -0.1], "the same point", 0.0),
]


def hand_points():
    cases = []
    for p, q, kind, expected in HAND_POINTS:
        case = point_case(p, q, kind)
        if expected is not None and not math.isclose(case["sphere"], expected, rel_tol=1e-14,
                                                     abs_tol=1e-9):
            raise AssertionError(f"hand point {kind}: got {case['sphere']}, expected {expected}")
        cases.append(case)
    return cases


def random_point(rng):
    lat = math.degrees(math.asin(rng.uniform(-1.0, 1.0)))  # uniform on the sphere
    lon = rng.uniform(-180.0, 180.0)
    return [lat, lon]


def random_point_pair(rng):
    kind = str(rng.choice(["global", "near", "polar", "antimeridian", "near-antipodal"],
                          p=[0.4, 0.3, 0.1, 0.1, 0.1]))
    p = random_point(rng)
    if kind == "global":
        q = random_point(rng)
    elif kind == "near":
        # within about 1 m to 100 km
        spread = 10.0 ** rng.uniform(-5.0, 0.0)
        q = [float(np.clip(p[0] + spread * rng.normal(), -90.0, 90.0)), p[1] + spread * rng.normal()]
    elif kind == "polar":
        p = [float(rng.choice([-1.0, 1.0])) * rng.uniform(85.0, 90.0), rng.uniform(-180.0, 180.0)]
        q = [math.copysign(rng.uniform(80.0, 90.0), p[0]), rng.uniform(-180.0, 180.0)]
    elif kind == "antimeridian":
        p = [rng.uniform(-70.0, 70.0), rng.uniform(179.0, 180.0)]
        q = [p[0] + rng.uniform(-1.0, 1.0), rng.uniform(-180.0, -179.0)]
    else:
        offset = 10.0 ** rng.uniform(-4.0, 0.0)
        q = [-p[0] + offset * rng.normal(), p[1] + 180.0 + offset * rng.normal()]
        q[0] = float(np.clip(q[0], -90.0, 90.0))
    return [float(v) for v in p], [float(v) for v in q], kind


# --------------------------------------------------------------------------------------
# Cases
# --------------------------------------------------------------------------------------

def generate():
    rng = np.random.default_rng(SEED)
    boxes = hand_boxes()
    for _ in range(N_RANDOM_BOXES):
        a, b, kind = random_box_pair(rng)
        boxes.append(box_case(a, b, kind))
    points = hand_points()
    for _ in range(N_RANDOM_POINTS):
        p, q, kind = random_point_pair(rng)
        points.append(point_case(p, q, kind))
    ratios = [c["sphere"] / c["wgs84"] for c in points if c["wgs84"] > 0.0]
    return {
        "source": SOURCE,
        "earth_mean_radius": EARTH_MEAN_RADIUS,
        "wgs84": {"a": WGS84_A, "f": WGS84_F},
        "ratio_bound": [RATIO_LOW, RATIO_HIGH],
        "ratio_seen": [min(ratios), max(ratios)],
        "iou_cases": boxes,
        "geodesic_cases": points,
    }


def dump(doc, path):
    """One case per line; floats as json writes them (repr, round-trips exactly)."""
    head = {k: v for k, v in doc.items() if not k.endswith("_cases")}
    lines = ["{" + ", ".join(f"{json.dumps(k)}: {json.dumps(v)}" for k, v in head.items()) + ","]
    for n, key in enumerate(("iou_cases", "geodesic_cases")):
        lines.append(f'"{key}": [')
        lines.append(",\n".join(json.dumps(case) for case in doc[key]))
        lines.append("]," if n == 0 else "]")
    lines.append("}")
    path.parent.mkdir(parents=True, exist_ok=True)
    path.write_text("\n".join(lines) + "\n")


# --------------------------------------------------------------------------------------
# --check
# --------------------------------------------------------------------------------------

def check(doc, path):
    committed, fresh = load(doc, path, __file__)
    if committed is None:
        return 1
    diffs = compare(committed, fresh, REL_TOL, "doc")
    return report(
        path,
        diffs,
        f"OK: {path.name} matches the regenerated {len(fresh['iou_cases'])} box and "
        f"{len(fresh['geodesic_cases'])} point cases",
    )


def main(argv=None):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--check", action="store_true",
                        help="regenerate in memory and compare with the committed JSON")
    parser.add_argument("--output", type=Path, default=OUTPUT, help=argparse.SUPPRESS)
    args = parser.parse_args(argv)
    doc = generate()
    if args.check:
        return check(doc, args.output)
    dump(doc, args.output)
    low, high = doc["ratio_seen"]
    print(f"wrote {args.output} with {len(doc['iou_cases'])} box and "
          f"{len(doc['geodesic_cases'])} point cases; sphere/WGS84 ratios seen {low:.6f} to "
          f"{high:.6f} (bound {RATIO_LOW:.6f} to {RATIO_HIGH:.6f})")
    return 0


if __name__ == "__main__":
    sys.exit(main())
