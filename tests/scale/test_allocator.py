"""The batch runs' allocator settings (activity._allocator): applied where glibc takes them,
left alone where the user set them, and effective (freed blocks are reused without new page
faults). Each case runs in a fresh interpreter: the settings are process-wide."""

import ctypes
import os
import subprocess
import sys

import pytest

try:
    ctypes.CDLL(None).gnu_get_libc_version  # noqa: B018
    GLIBC = sys.platform.startswith("linux")
except (OSError, AttributeError):
    GLIBC = False

pytestmark = pytest.mark.skipif(not GLIBC, reason="glibc's mallopt only")

# Three 8 MB arrays alive at once, then freed, twenty times: with glibc's defaults the freed
# top of the heap (24 MB) exceeds the trim threshold (twice the largest block freed, 16 MB)
# and is returned, and every cycle faults its pages in again.
CYCLES = """
import resource, sys
import numpy as np
from activity._allocator import keep_freed_memory
applied = keep_freed_memory() if sys.argv[1] == "on" else None
def cycle():
    arrays = [np.ones(1_000_000) for _ in range(3)]
    return sum(float(a[-1]) for a in arrays)
for _ in range(3):
    cycle()
before = resource.getrusage(resource.RUSAGE_SELF).ru_minflt
for _ in range(20):
    cycle()
print(applied, resource.getrusage(resource.RUSAGE_SELF).ru_minflt - before)
"""


def _run(mode, **env):
    clean = {k: v for k, v in os.environ.items() if not k.startswith("MALLOC_")}
    out = subprocess.run(
        [sys.executable, "-c", CYCLES, mode], env={**clean, **env}, capture_output=True, text=True, check=True
    )
    applied, faults = out.stdout.split()
    return applied, int(faults)


def test_applied_and_freed_blocks_are_reused_without_faults():
    applied, faults = _run("on")
    _, default_faults = _run("off")
    assert applied == "True"
    # 20 cycles of 24 MB are 117,000 pages of 4 kB; kept memory takes next to none of them
    assert faults < 500, (faults, default_faults)


def test_the_users_own_settings_stand():
    applied, _ = _run("on", MALLOC_TRIM_THRESHOLD_="131072", MALLOC_MMAP_THRESHOLD_="131072")
    assert applied == "False"


def test_batch_commands_ask_for_it_and_one_composition_does_not():
    import importlib

    cli = importlib.import_module("activity.cli.main")

    def batch(group, *argv):
        return cli._batch_work(cli.build_parser((group,)).parse_args(list(argv)))

    assert batch("solution", "solution", "--table", "t.csv")
    assert batch("electrode", "invert", "--table", "t.csv")
    assert batch("electrode", "potential", "Ca2+", "Ca2+=0.01", "Cl-=0.02", "--method", "monte-carlo")
    assert batch("ise", "calibrate", "standards.csv", "--samples", "s.csv", "--uncertainty", "monte-carlo")
    assert batch("ph", "ph-calibrate", "buffers.csv", "--monte-carlo")
    assert not batch("solution", "solution", "Na+=0.1", "Cl-=0.1")
    assert not batch("electrode", "potential", "Ca2+", "Ca2+=0.01", "Cl-=0.02", "--method", "gum")
