"""Where the outside reference data lives (NETLIB and MIPLIB problems, the Stigler table),
and what a test does when it is absent.

The folder is `shared/reference/` beside the repository (`../shared/reference` from the
project root); BLENDKIT_REFERENCE names another place. A clone made elsewhere (for example
`.ci/run` in a temporary folder) also finds the folder beside the repository it was cloned
from, when that is a local path. On a developer's machine a test whose file is absent
skips; under CI (`CI=true` in the environment) it fails and says where it looked.
"""

from __future__ import annotations

import os
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
ENV = "BLENDKIT_REFERENCE"


def under_ci() -> bool:
    """True when the CI variable says so (CI=true, as CI services and .ci/run set it)."""
    return os.environ.get("CI", "").strip().lower() in ("true", "1", "yes")


def _origin_folder() -> Path | None:
    """The local repository this clone came from, if any: its `shared/reference` sibling is
    where a clone in a temporary folder finds the data."""
    try:
        done = subprocess.run(["git", "-C", str(ROOT), "remote", "get-url", "origin"],
                              capture_output=True, text=True, timeout=30)
    except (OSError, subprocess.SubprocessError):
        return None
    url = done.stdout.strip()
    if done.returncode != 0 or not url:
        return None
    url = url.removeprefix("file://")
    path = Path(url)
    return path.resolve() if path.is_absolute() and path.is_dir() else None


def candidate_folders() -> list[Path]:
    """The places searched, in order: BLENDKIT_REFERENCE alone when it is set; otherwise
    ../shared/reference beside this repository, then beside the repository it was cloned from."""
    if os.environ.get(ENV):
        return [Path(os.environ[ENV]).expanduser()]
    places = [ROOT.parent / "shared" / "reference"]
    origin = _origin_folder()
    if origin is not None and origin.parent / "shared" / "reference" not in places:
        places.append(origin.parent / "shared" / "reference")
    return places


def reference_file(relative: str) -> Path:
    """The reference file `relative` (e.g. "netlib/afiro.mps"); when no searched folder holds
    it, a skip on a developer's machine and a failure under CI, naming every place looked."""
    places = candidate_folders()
    for folder in places:
        if (folder / relative).is_file():
            return folder / relative
    looked = ", ".join(str(folder / relative) for folder in places)
    message = (f"outside reference file {relative} not found; looked in: {looked}. "
               f"Set {ENV} to the folder holding netlib/, miplib/ and stigler1939.csv.")
    if under_ci():
        pytest.fail(f"CI=true and {message}", pytrace=False)
    pytest.skip(message)
