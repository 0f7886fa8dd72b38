"""What the figures were measured on: processor, cores, versions and load average."""

from __future__ import annotations

import os
import platform
from importlib import metadata
from pathlib import Path


def _version(package: str) -> str:
    """An installed package's version, without importing it (highspy may be missing)."""
    try:
        return metadata.version(package)
    except metadata.PackageNotFoundError:
        return "not installed"


def load_average() -> str:
    """The one-minute load average, or '?' where the system does not tell."""
    try:
        return f"{os.getloadavg()[0]:.2f}"
    except (OSError, AttributeError):
        return "?"


def _processor() -> str:
    """The processor's model name from /proc/cpuinfo, else what `platform` says."""
    cpu = platform.processor() or platform.machine()
    try:
        for line in Path("/proc/cpuinfo").read_text().splitlines():
            if line.startswith("model name"):
                return line.split(":", 1)[1].strip()
    except OSError:
        pass
    return cpu


def machine_lines() -> list[str]:
    """What the numbers were measured on, for copying into the README."""
    usable = len(os.sched_getaffinity(0)) if hasattr(os, "sched_getaffinity") else os.cpu_count()
    return [
        f"machine: {_processor()}, {usable} cores usable ({os.cpu_count()} online), "
        f"{platform.system()} {platform.release()}",
        f"python {platform.python_version()}, numpy {_version('numpy')}, scipy {_version('scipy')}, "
        f"highspy {_version('highspy')}",
        f"load average at start {load_average()} (other work on the machine slows every figure)",
    ]
