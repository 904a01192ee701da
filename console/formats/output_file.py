"""Writing a file the user asked for (notebook and term-list exports, plots): what happens depends on what the
path is.

- ``-``: standard output.
- A device, a FIFO (named pipe) or a terminal: written to directly, as any program's output is: no temporary
  file, no rename (which would replace the node with a regular file, and a FIFO's reader would get nothing).
- A symbolic link: its target is what gets written (and replaced, atomically, beside the target).
- A regular file: written to a temporary file beside it, flushed to disk and renamed over it, so a reader never
  sees half a file; an existing file is only replaced when asked (``force``).
- A new file honours the umask, as any ordinary program's output does.
- A folder that does not exist is one clear error (exit 4), not a traceback.
"""

from __future__ import annotations

import os
import stat
import sys
import tempfile
from pathlib import Path

from wordkin.index.errors import UnreadableFileError, UsageError


class FileExistsUsageError(UsageError):
    """The output file exists and replacing it was not asked for."""


def current_umask() -> int:
    """The process's umask, read without changing it (Linux reports it in /proc; elsewhere the usual 022)."""
    try:
        with open("/proc/self/status", encoding="ascii") as f:
            for line in f:
                if line.startswith("Umask:"):
                    return int(line.split()[1], 8)
    except (OSError, ValueError):
        pass
    return 0o022


def write_output(out: str | os.PathLike[str], text: str, *, force: bool = False, how_to_force: str = "--force") -> str:
    """Write ``text`` to ``out`` by the rules above; returns where it went, for the message."""
    if str(out) == "-":
        sys.stdout.write(text)
        sys.stdout.flush()
        return "standard output"
    p = Path(out)
    if p.is_symlink():
        p = Path(os.path.realpath(p))
    try:
        st = p.stat()
    except FileNotFoundError:
        st = None
    except OSError as exc:
        raise UnreadableFileError(str(p), f"cannot write: {exc.strerror or exc}") from None
    if st is not None and stat.S_ISDIR(st.st_mode):
        raise UsageError(f"{p} is a folder; give a file name")
    if st is not None and not stat.S_ISREG(st.st_mode):
        try:
            with open(p, "w", encoding="utf-8", newline="") as f:  # a device, a FIFO: written to, never replaced
                f.write(text)
        except OSError as exc:
            raise UnreadableFileError(str(p), f"cannot write: {exc.strerror or exc}") from None
        return str(p)
    if st is not None and not force:
        raise FileExistsUsageError(f"{p} exists; {how_to_force} to replace it")
    folder = p.parent if str(p.parent) else Path(".")
    if not folder.is_dir():
        raise UnreadableFileError(str(folder), "no such folder")
    try:
        fd, tmp = tempfile.mkstemp(prefix=f".{p.name}.", suffix=".tmp", dir=folder)
    except OSError as exc:
        raise UnreadableFileError(str(folder), f"cannot write there: {exc.strerror or exc}") from None
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="") as f:
            f.write(text)
            f.flush()
            os.fsync(f.fileno())
        # mkstemp makes 0600; a replaced file keeps its mode, a new one gets what the umask allows.
        mode = stat.S_IMODE(st.st_mode) if st is not None else 0o666 & ~current_umask()
        os.chmod(tmp, mode)
        os.replace(tmp, p)
    except OSError as exc:
        Path(tmp).unlink(missing_ok=True)
        raise UnreadableFileError(str(p), f"cannot write: {exc.strerror or exc}") from None
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return str(p)
