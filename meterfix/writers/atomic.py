"""Safe writing: every output goes to a temporary file in the target folder, then is renamed.

A run killed while writing leaves no partial output under the final name. Outputs never replace
an input file, and an existing output is refused unless ``overwrite`` is set. Final files get
mode ``0666 & ~umask``. A month's set of outputs is moved into place as a whole by
:mod:`meterfix.writers.outset`.
"""

from __future__ import annotations

import contextlib
import glob
import os
import re
import tempfile
from pathlib import Path

from ..errors import InputError

_protected: set[str] = set()


def protect_inputs(paths) -> None:
    """Register input files that no output may ever replace."""
    for p in paths:
        with contextlib.suppress(OSError):
            _protected.add(os.path.realpath(p))


def check_target(path, *, overwrite: bool = False) -> Path:
    """Refuse an input as output, and an existing output unless ``overwrite``."""
    path = Path(path)
    if os.path.realpath(path) in _protected:
        raise InputError("refusing to write over an input file", file=path,
                         hint="choose another --out folder or output name")
    if path.exists() and not overwrite:
        raise InputError("output already exists", file=path, hint="pass --overwrite or choose another --out folder")
    if path.exists() and path.is_dir():
        raise InputError("output path is a folder", file=path)
    return path


@contextlib.contextmanager
def atomic_path(path, *, overwrite: bool = False):
    """Yield a temporary path beside ``path``; rename it onto ``path`` on success only.

    The temporary name is ``.<name>.<random>.part``; such files left by a killed run are removed
    the next time the same output is written.
    """
    path = check_target(path, overwrite=overwrite)
    path.parent.mkdir(parents=True, exist_ok=True)
    # temporary files of the same output left by an earlier run that was killed while writing
    for stale in path.parent.glob(f".{glob.escape(path.name)}.*.part"):
        with contextlib.suppress(OSError):
            stale.unlink()
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".part", dir=path.parent)
    os.close(fd)
    try:
        yield Path(tmp)
        os.chmod(tmp, file_mode())  # mkstemp makes 0600; the file is as readable as the umask allows
        os.replace(tmp, path)
    finally:
        with contextlib.suppress(FileNotFoundError):
            os.unlink(tmp)


def umask() -> int:
    """The process umask, read without changing it where the system allows (Linux), else set back."""
    with contextlib.suppress(OSError, ValueError):
        with open("/proc/self/status", encoding="ascii") as fh:
            for line in fh:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    mask = os.umask(0o022)
    os.umask(mask)
    return mask


def file_mode() -> int:
    """Mode of a final output file: readable and writable as the umask allows (0644 under umask 022)."""
    return 0o666 & ~umask()


def folder_mode() -> int:
    return 0o777 & ~umask()


def write_bytes(path, data: bytes, *, overwrite: bool = False) -> Path:
    with atomic_path(path, overwrite=overwrite) as tmp:
        with open(tmp, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
    return Path(path)


def write_text(path, text: str, *, overwrite: bool = False) -> Path:
    return write_bytes(path, text.encode("utf-8"), overwrite=overwrite)


def safe_name(text: str, default: str = "meter") -> str:
    """A name safe to use as one file-name component (no separators, no traversal)."""
    s = re.sub(r"[^A-Za-z0-9._-]+", "_", str(text)).strip("._")
    return (s or default)[:80]


_FORMULA_START = ("=", "+", "-", "@", "\t", "\r")


def neutralise_cell(value):
    """Text that a spreadsheet would run as a formula is prefixed with an apostrophe."""
    if isinstance(value, str) and value.startswith(_FORMULA_START):
        return "'" + value
    return value
