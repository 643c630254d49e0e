"""What the reference scripts share for `--check`: a recursive comparison of a committed JSON
document with a freshly generated one, and the report of the differences."""

import json
import sys
from pathlib import Path


def compare(expected, actual, rel_tol, where="", out=None):
    """Recursive comparison; returns a list of difference descriptions."""
    out = [] if out is None else out
    if isinstance(expected, dict) and isinstance(actual, dict):
        if set(expected) != set(actual):
            out.append(f"{where}: keys {sorted(expected)} != {sorted(actual)}")
            return out
        for key in expected:
            compare(expected[key], actual[key], rel_tol, f"{where}.{key}", out)
    elif isinstance(expected, list) and isinstance(actual, list):
        if len(expected) != len(actual):
            out.append(f"{where}: length {len(expected)} != {len(actual)}")
            return out
        for idx, (e, a) in enumerate(zip(expected, actual)):
            compare(e, a, rel_tol, f"{where}[{idx}]", out)
    elif isinstance(expected, bool) or isinstance(actual, bool):
        if expected is not actual:
            out.append(f"{where}: {expected!r} != {actual!r}")
    elif isinstance(expected, int) and isinstance(actual, int):
        if expected != actual:
            out.append(f"{where}: {expected} != {actual}")
    elif isinstance(expected, (int, float)) and isinstance(actual, (int, float)):
        if not (expected == actual or abs(expected - actual) <= rel_tol * max(abs(expected), abs(actual))):
            out.append(f"{where}: committed {expected!r}, regenerated {actual!r}")
    elif expected != actual:
        out.append(f"{where}: {expected!r} != {actual!r}")
    return out


def load(doc, path, script):
    """The committed document at `path` and `doc` as a file round trip would type it, or None
    (after saying so) when nothing is committed."""
    if not path.exists():
        print(f"FAIL: {path} does not exist; run {Path(script).name} without --check", file=sys.stderr)
        return None, None
    return json.loads(path.read_text()), json.loads(json.dumps(doc))


def report(path, diffs, ok_message):
    """Prints the outcome; returns the exit code."""
    if diffs:
        print(f"FAIL: {path} differs from regenerated reference ({len(diffs)} differences):", file=sys.stderr)
        for line in diffs[:20]:
            print("  " + line, file=sys.stderr)
        if len(diffs) > 20:
            print(f"  ... and {len(diffs) - 20} more", file=sys.stderr)
        return 1
    print(ok_message)
    return 0
