"""The address-space margin kept before a C parser gets its next chunk."""

from __future__ import annotations

import os
import subprocess
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]

_CHILD = r"""
import resource, sys
from udfs.xlsx.headroom import MIN_HEADROOM, ensure_headroom

def mapped():
    with open("/proc/self/statm") as fh:
        return int(fh.read().split()[0]) * resource.getpagesize()

left = int(sys.argv[1]) << 20
resource.setrlimit(resource.RLIMIT_AS, (mapped() + left, resource.RLIM_INFINITY))
try:
    ensure_headroom()
except MemoryError as exc:
    print("MemoryError", exc)
else:
    print("fine")
"""


@pytest.mark.skipif(not os.path.exists("/proc/self/statm"), reason="needs Linux's /proc")
@pytest.mark.parametrize(("left_mib", "expected"), [(4, "MemoryError"), (64, "fine")])
def test_a_cap_with_too_little_left_is_out_of_memory(left_mib, expected):
    done = subprocess.run(
        [sys.executable, "-c", _CHILD, str(left_mib)],
        capture_output=True,
        text=True,
        timeout=60,
        env=dict(os.environ, PYTHONPATH=str(ROOT)),
        check=True,
    )
    assert done.stdout.split()[0] == expected, done.stdout + done.stderr
    if expected == "MemoryError":
        assert "less than 16 MiB of address space left" in done.stdout


def test_without_a_cap_nothing_happens():
    import resource

    from udfs.xlsx.headroom import ensure_headroom

    if resource.getrlimit(resource.RLIMIT_AS)[0] != resource.RLIM_INFINITY:
        pytest.skip("this process runs under an address-space cap")
    assert ensure_headroom(minimum=1 << 60) is None  # a margin no machine has: no cap, no check
