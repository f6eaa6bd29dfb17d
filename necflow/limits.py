"""Limits that keep any input from taking the machine down.

Every file necflow reads and every model it builds is sized before anything
of that size is allocated: a design file's bytes, its YAML document once
aliases are expanded, its list lengths, the engine's interaction matrix and
the worker count.  Each limit is a module constant with the reason for its
size; an input past one is refused with a one-line error naming the field.
"""

from __future__ import annotations

import os
import resource

#: Largest design (or batch) file read [bytes].  A design with a thousand
#: explicit wires is about 100 kB; 2 MiB leaves room for comments.
MAX_DESIGN_BYTES = 2 * 1024 * 1024
#: Largest measured sweep read [bytes]: 100,000 Touchstone lines of about
#: 60 characters.
MAX_SWEEP_BYTES = 8 * 1024 * 1024
#: Largest YAML document counted with every alias expanded [nodes].  A
#: design with a thousand wires has about 20,000 nodes.
MAX_YAML_NODES = 200_000
#: Deepest YAML nesting accepted.  Designs nest about six levels.
MAX_YAML_DEPTH = 64

#: Longest lists of a design (key path -> entries).
MAX_BANDS = 50
MAX_POINTS_TOTAL = 20_000
MAX_WIRES = 1_000
MAX_FEED_ELEMENTS = 100
MAX_ALTERNATIVES = 20
MAX_ELEVATIONS = 20
MAX_SEARCH_FIELDS = 50

#: Frequency range the tool is meant for [Hz]: the HF bands with a margin
#: on either side.  The line catalog's loss figures and the ground constants
#: (ITU-R P.527) are given for HF; the engine itself has no such limit.
F_MIN_HZ = 0.5e6
F_MAX_HZ = 60.0e6

#: Bytes per element of the engine's interaction matrix (complex double).
_MATRIX_ITEM_BYTES = 16
#: Share of the memory available to this process the engine may take.
MEMORY_SHARE = 0.5

#: Workers per core beyond which ``--workers`` needs ``--force-workers``.
WORKERS_PER_CORE = 4


def available_memory_bytes() -> int:
    """Memory this process may still use [bytes]: the smaller of the
    system's available memory (``MemAvailable`` of /proc/meminfo, or the
    physical memory) and the address-space limit (RLIMIT_AS) if one is set."""
    avail = None
    try:
        with open("/proc/meminfo", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("MemAvailable:"):
                    avail = int(line.split()[1]) * 1024
                    break
    except OSError:
        pass
    if avail is None:
        try:
            avail = os.sysconf("SC_PHYS_PAGES") * os.sysconf("SC_PAGE_SIZE")
        except (ValueError, OSError, AttributeError):
            avail = 4 * 1024 ** 3
    soft, _ = resource.getrlimit(resource.RLIMIT_AS)
    if soft != resource.RLIM_INFINITY:
        avail = min(avail, max(0, soft - _address_space_in_use()))
    return int(avail)


def _address_space_in_use() -> int:
    try:
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("VmSize:"):
                    return int(line.split()[1]) * 1024
    except OSError:
        pass
    return 0


def solve_memory_bytes(segments: int) -> int:
    """Memory of the engine's interaction matrix for ``segments`` segments
    [bytes]: it grows as the square of the count (a dense complex matrix;
    Burke and Poggio, NEC-2 user's guide, 1981, Part I, from memory)."""
    return int(segments) ** 2 * _MATRIX_ITEM_BYTES


def max_segments_for_memory() -> int:
    """The largest segment count whose matrix fits :data:`MEMORY_SHARE` of
    the memory available now."""
    return int((MEMORY_SHARE * available_memory_bytes() / _MATRIX_ITEM_BYTES) ** 0.5)


def worker_limit() -> int:
    """Workers allowed without ``--force-workers``."""
    return WORKERS_PER_CORE * (os.cpu_count() or 1)


__all__ = [n for n in dir() if n.isupper()] + [
    "available_memory_bytes", "solve_memory_bytes", "max_segments_for_memory", "worker_limit"]
