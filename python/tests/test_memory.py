"""Repeated calls keep memory flat: nothing the binding allocates outlives a call."""

import gc

import pytest

import switchyard


def resident_bytes():
    # /proc/self/statm: size resident shared ... in pages (Linux's proc(5)).
    with open("/proc/self/statm") as statm:
        resident_pages = int(statm.read().split()[1])
    import os

    return resident_pages * os.sysconf("SC_PAGE_SIZE")


@pytest.mark.skipif(not __import__("os").path.exists("/proc/self/statm"), reason="needs Linux /proc")
def test_ten_thousand_small_calls_keep_memory_flat(tmp_path):
    truth = tmp_path / "truth.csv"
    estimate = tmp_path / "estimate.csv"
    truth.write_text("time,id,x,y\n0,1,0,0\n0,2,10,0\n1,1,1,0\n1,2,11,0\n2,1,2,0\n2,2,12,0\n")
    estimate.write_text("time,id,x,y\n0,7,0,1\n0,8,10,1\n1,7,1,1\n1,8,11,1\n2,7,2,1\n2,8,12,1\n")
    # The same estimate as columns: half the calls pass a table, half a path.
    table = {"time": [0, 0, 1, 1, 2, 2], "id": ["7", "8"] * 3, "x": [0, 10, 1, 11, 2, 12], "y": [1] * 6}
    # Warm-up: the allocator's arenas and Python's caches reach their working size first.
    for k in range(500):
        switchyard.score(truth, table if k % 2 else estimate, cutoff=5)
    gc.collect()
    before = resident_bytes()
    for k in range(10_000):
        result = switchyard.score(truth, table if k % 2 else estimate, cutoff=5)
    gc.collect()
    growth = resident_bytes() - before
    # Hand calculation from the trajectory GOSPA definition: each estimate is 1 away from its
    # truth (under the cut-off 5) at 3 steps for 2 objects, no miss, no switch: 6 at order 1.
    assert result.total == pytest.approx(6.0, abs=1e-9)
    # A leak of even 200 bytes a call would add 2 MB; the bound is 1 MiB for 10,000 calls.
    assert growth < 1 << 20, f"resident memory grew by {growth} bytes"
