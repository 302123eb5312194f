"""The one line every benchmark prints first: the machine its figures were measured on."""

from __future__ import annotations

import os
import platform

import numpy as np


def machine_line(cores_note: str = "") -> str:
    """``machine: x86_64, 2 cores, 24 GiB, Python 3.11.7, numpy 2.4.6`` (``cores_note`` after the cores)."""
    memory = os.sysconf("SC_PAGE_SIZE") * os.sysconf("SC_PHYS_PAGES") / 2**30
    return (f"machine: {platform.machine()}, {os.cpu_count()} cores{cores_note}, {memory:.0f} GiB, Python "
            f"{platform.python_version()}, numpy {np.__version__}")
