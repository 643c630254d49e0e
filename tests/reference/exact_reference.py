#!/usr/bin/env python3
"""Reference values for the scenes whose trajectory GOSPA LP optimum is fractional.

Trajectory GOSPA: A. F. Garcia-Fernandez, A. S. Rahmathullah, L. Svensson, "A metric on the
space of finite sets of trajectories for evaluation of multi-target tracking algorithms",
IEEE Trans. Signal Processing 68:3917-3928, 2020, arXiv:1605.01177.

The scenes below were found by the seed search `search_fractional_scenes` in
tests/it/exact.rs (its generator and seed are named beside each scene), except the first,
which is derived by hand in the same file. For each scene this script computes, with
`evaluate` from trajectory_reference.py (the full unreduced model, scipy linprog and milp on
HiGHS, with its certificates asserted), the LP optimum `lp_total` and the integral optimum
`exact_total`, asserts that the LP is strictly below the integral optimum, and writes
tests/data/exact/fractional_scenes.json.

    python3 tests/reference/exact_reference.py          # (re)write the JSON
    python3 tests/reference/exact_reference.py --check  # exit 1 on any difference
"""

import json
import sys
from pathlib import Path

from trajectory_reference import evaluate

HERE = Path(__file__).resolve().parent
OUTPUT = HERE.parent / "data" / "exact" / "fractional_scenes.json"

# (name, origin, cutoff, order, switch penalty, truth, estimate)
SCENES = [
    (
        "hand",
        "derived by hand in tests/it/exact.rs",
        1.5, 1.0, 1.0,
        {"t0": [(0, [2.0]), (1, [2.0])], "t1": [(1, [2.0])], "t2": [(0, [1.0])]},
        {"e0": [(0, [3.0])], "e1": [(0, [0.0]), (1, [1.0])], "e2": [(0, [1.0]), (1, [2.0])]},
    ),
    (
        "plane-1",
        "search_fractional_scenes: plane, seed 779, scene 1 found",
        2.0, 2.0, 1.0,
        {"t0": [(0, [-0.6558733229886217, -0.9218547455988166]), (3, [-1.4681818324868794, 0.452105463790182])], "t1": [(1, [0.473253575563616, 0.17979836930372958]), (2, [-0.8558760155647257, 0.028986443553444773]), (3, [-0.8518457309827249, -0.15950616350029512])], "t2": [(0, [0.34670413763186403, -1.4079896941413492]), (1, [0.6744866011895176, 1.1392747209501297])]},
        {"e0": [(0, [-0.778446365494019, -1.395264514450536]), (1, [0.6786418116635835, 0.3535543706514907]), (2, [1.0300013596164794, 0.9170298857773294]), (3, [1.1374097517480237, 1.380131306574943])], "e1": [(1, [-1.4921460052391662, 1.0471483542089421]), (3, [-0.12882048818516262, 1.0738872998203552])], "e2": [(2, [1.11392692283264, 0.7466251109392441])]},
    ),
    (
        "plane-2",
        "search_fractional_scenes: plane, seed 779, scene 2 found",
        3.0, 1.0, 1.0,
        {"t0": [(0, [-0.6312627872798726, 1.1383047319798487]), (1, [-0.4160076471911429, 0.6019366511190901]), (3, [0.7649749273239347, -0.1740802873897758])], "t1": [(0, [0.5419608455975453, -1.1876318925944973]), (1, [0.5431451816257756, -0.03990354933952295]), (2, [0.4556156260898657, -0.013812070604511348])], "t2": [(1, [-0.32346712658618965, 0.6324191457266499]), (2, [-1.4624151411435593, 1.4438241146903636])]},
        {"e0": [(0, [-0.3306063466704203, 1.0955660132509615]), (1, [0.36917681838418764, -0.29955363676582214]), (2, [-1.0006769559257818, 0.2542619497003093])], "e1": [(0, [-1.2280472032621603, 1.4285398354597543]), (2, [-1.1533984600288103, 1.3819633537417273]), (3, [0.42637917701645434, -0.3333052626934458])], "e2": [(2, [1.4281342253369154, 0.8344503320664356])]},
    ),
    (
        "plane-3",
        "search_fractional_scenes: plane, seed 779, scene 3 found",
        3.0, 2.0, 2.0,
        {"t0": [(2, [0.5512986443276205, 0.08046807265009309])], "t1": [(1, [-1.2201754195690429, 1.4991551261679499])], "t2": [(1, [-1.3493961309626086, 0.8481505171398511]), (3, [-1.0772716781248697, -1.0208960395484836])]},
        {"e0": [(1, [-1.474032196915318, -0.9600280301530755]), (2, [-1.1231590459169483, 0.4654559656669131])], "e1": [(0, [-0.8880635829545828, -1.0788608050197825]), (1, [0.9295913462064537, -0.5368250249804627]), (2, [0.14599663872696114, 1.2544972088107396]), (3, [-1.4508009721818305, -1.2209234123346333])]},
    ),
    (
        "plane-4",
        "search_fractional_scenes: plane, seed 779, scene 4 found",
        3.0, 2.0, 2.0,
        {"t0": [(0, [-0.49086639381196845, -0.1520169614254934]), (3, [1.1102676805805771, -0.6628730007316062])], "t1": [(0, [1.1882700617817117, -1.041254208516258]), (3, [1.2956332177574332, -0.8607684362369372])], "t2": [(0, [1.323253427177557, -0.2378794149591555]), (1, [-0.7571796684362141, 0.2423041606050566])]},
        {"e0": [(0, [-0.3625450080217874, 0.5677357334185207]), (1, [-1.4334647153370759, -0.24763488612651402]), (2, [0.47662208607024203, -0.4317486029348916])], "e1": [(0, [1.0238768710855088, 0.0026017691490317573]), (1, [0.3586744123618625, -0.06986325363188478]), (2, [-1.0151556255153378, -1.1583119308375873]), (3, [0.3040668888619994, 1.3394636728079279])], "e2": [(1, [1.0392877076877989, -1.2011261499138712]), (2, [-1.183913632315813, -1.4167055795888315])]},
    ),
    (
        "grid-1",
        "search_fractional_scenes: grid, seed 781, scene 1 found",
        2.5, 1.0, 1.0,
        {"t0": [(0, [1.0]), (2, [2.0])], "t1": [(1, [1.0]), (2, [0.0])], "t2": [(2, [3.0])]},
        {"e0": [(0, [2.0]), (1, [1.0]), (2, [3.0])], "e1": [(1, [2.0]), (2, [4.0])]},
    ),
    (
        "grid-2",
        "search_fractional_scenes: grid, seed 781, scene 2 found",
        1.5, 1.0, 1.0,
        {"t0": [(0, [4.0]), (1, [2.0]), (2, [1.0])], "t1": [(1, [3.0]), (2, [1.0])], "t2": [(0, [0.0]), (2, [1.0])]},
        {"e0": [(0, [4.0]), (2, [2.0])], "e1": [(0, [4.0]), (1, [4.0]), (2, [3.0])], "e2": [(1, [2.0]), (2, [4.0])]},
    ),
    (
        "grid-3",
        "search_fractional_scenes: grid, seed 781, scene 3 found",
        2.5, 1.0, 1.0,
        {"t0": [(0, [1.0]), (1, [1.0]), (2, [2.0])], "t1": [(1, [0.0]), (2, [1.0])]},
        {"e0": [(0, [2.0]), (1, [4.0]), (2, [3.0])], "e1": [(1, [1.0])], "e2": [(2, [2.0])]},
    ),
]


def cases():
    result = []
    for name, origin, cutoff, order, switch_penalty, truth, estimate in SCENES:
        lp_total, exact_total, steps = evaluate(truth, estimate, cutoff, order, switch_penalty)
        if not exact_total > lp_total + 1e-9 * max(1.0, exact_total):
            raise AssertionError(f"{name}: the LP {lp_total!r} is not below the exact {exact_total!r}")
        as_json = lambda tracks: {  # noqa: E731
            oid: [[int(s), [float(v) for v in x]] for s, x in seq] for oid, seq in tracks.items()
        }
        result.append(
            {
                "name": name,
                "origin": origin,
                "cutoff": cutoff,
                "order": order,
                "switch_penalty": switch_penalty,
                "truth": as_json(truth),
                "estimate": as_json(estimate),
                "lp_total": lp_total,
                "exact_total": exact_total,
                "steps": int(steps),
            }
        )
    return result


def main():
    doc = {
        "source": (
            "Scenes with a fractional trajectory GOSPA LP optimum (Garcia-Fernandez, "
            "Rahmathullah, Svensson, IEEE TSP 68:3917-3928, 2020); lp_total by "
            "scipy.optimize.linprog(method='highs') and exact_total by scipy.optimize.milp on "
            "the full unreduced model; written by tests/reference/exact_reference.py."
        ),
        "cases": cases(),
    }
    # One case per line, like the other reference files.
    text = (
        "{" + f'"source": {json.dumps(doc["source"])},\n"cases": [\n'
        + ",\n".join(json.dumps(case) for case in doc["cases"])
        + "\n]}\n"
    )
    if "--check" in sys.argv[1:]:
        committed = json.loads(OUTPUT.read_text())
        fresh = json.loads(text)
        ok = committed["source"] == fresh["source"] and len(committed["cases"]) == len(fresh["cases"])
        for old, new in zip(committed["cases"], fresh["cases"]):
            for key in ("name", "cutoff", "order", "switch_penalty", "truth", "estimate", "steps"):
                ok &= old[key] == new[key]
            for key in ("lp_total", "exact_total"):
                ok &= abs(old[key] - new[key]) <= 1e-9 * max(1.0, abs(new[key]))
        print("exact fixtures: " + ("match" if ok else "DIFFER"))
        sys.exit(0 if ok else 1)
    OUTPUT.write_text(text)
    print(f"wrote {len(doc['cases'])} cases to {OUTPUT}")


if __name__ == "__main__":
    main()
