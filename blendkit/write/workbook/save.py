"""Where the output workbook lands: never on its input, and atomically.

The save writes a temporary file in the output's folder and moves it into place, so a
failed run leaves no half-written output and an existing output stays untouched.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path


def same_file(source: Path, output: Path) -> bool:
    """True when `output` is `source` under another spelling (relative path, symlink,
    hard link): the writer must never overwrite its input."""
    if output.resolve() == source.resolve():
        return True
    try:
        return output.exists() and os.path.samefile(source, output)
    except OSError:
        return False


def save_atomically(content: bytes, output: Path) -> None:
    """Write `content` next to `output` and move it into place, so readers never see a
    partial file."""
    handle, temp_name = tempfile.mkstemp(
        prefix=f".{output.name}.", suffix=".tmp", dir=output.parent
    )
    temp = Path(temp_name)
    try:
        with os.fdopen(handle, "wb") as stream:
            stream.write(content)
        os.chmod(temp, _file_mode(output))
        os.replace(temp, output)
    except BaseException:
        temp.unlink(missing_ok=True)
        raise


def _file_mode(output: Path) -> int:
    """mkstemp makes owner-only files; give the output the mode a plain save would."""
    if output.exists():
        return output.stat().st_mode & 0o777
    umask = os.umask(0)
    os.umask(umask)
    return 0o666 & ~umask
