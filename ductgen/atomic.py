"""Atomic, all-or-nothing file output.

Every output of a build is first written into a hidden staging folder inside the output
directory (same file system, so a rename is atomic), and only moved into place when the
whole build has succeeded. A failed build leaves nothing behind; an existing file is never
overwritten unless ``force`` is set.
"""

from __future__ import annotations

import os
import shutil
import tempfile
from collections.abc import Iterable
from pathlib import Path
from types import TracebackType

from ductgen.errors import ExportError, OverwriteError

__all__ = ["OutputSet", "check_free", "write_atomic"]


def _umask() -> int:
    mask = os.umask(0)
    os.umask(mask)
    return mask


def check_free(paths: Iterable[Path], force: bool) -> None:
    """Raise :class:`ExportError` if any path exists and ``force`` is not set."""
    if force:
        return
    taken = [p for p in paths if p.exists()]
    if taken:
        names = ", ".join(str(p) for p in taken[:5])
        more = f" and {len(taken) - 5} more" if len(taken) > 5 else ""
        raise OverwriteError(f"refusing to overwrite {names}{more}: pass --force to replace them")


def write_atomic(path: Path, data: bytes, force: bool = False) -> Path:
    """Write ``data`` to ``path`` through a temporary file and a rename."""
    path = Path(path)
    check_free([path], force)
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise
    return path


class OutputSet:
    """Collects a build's files in a staging folder and publishes them together.

    Use as a context manager: files added with :meth:`add` (bytes) or written by a
    producer into :meth:`staged_path` appear in ``out_dir`` only when :meth:`publish`
    is called; on any exception the staging folder is removed.
    """

    def __init__(self, out_dir: Path, force: bool = False) -> None:
        self.out_dir = Path(out_dir)
        self.force = force
        self._names: list[str] = []
        self._staging: Path | None = None

    def __enter__(self) -> OutputSet:
        self.out_dir.mkdir(parents=True, exist_ok=True)
        self._staging = Path(tempfile.mkdtemp(prefix=".ductgen-staging-", dir=self.out_dir))
        return self

    def __exit__(
        self,
        exc_type: type[BaseException] | None,
        exc: BaseException | None,
        tb: TracebackType | None,
    ) -> None:
        if self._staging is not None:
            shutil.rmtree(self._staging, ignore_errors=True)
            self._staging = None

    @property
    def staging(self) -> Path:
        if self._staging is None:
            raise RuntimeError("OutputSet used outside its 'with' block")
        return self._staging

    def staged_path(self, name: str) -> Path:
        """Path in the staging folder for a producer that writes files itself."""
        if name not in self._names:
            self._names.append(name)
        return self.staging / name

    def add(self, name: str, data: bytes) -> None:
        """Stage ``data`` under file name ``name``."""
        write_atomic(self.staged_path(name), data, force=True)

    @property
    def names(self) -> list[str]:
        return list(self._names)

    def publish(self) -> dict[str, Path]:
        """Move every staged file into ``out_dir``; returns name → final path."""
        finals = {n: self.out_dir / n for n in self._names}
        check_free(finals.values(), self.force)
        missing = [n for n in self._names if not (self.staging / n).exists()]
        if missing:
            raise ExportError(f"internal: staged files never written: {', '.join(missing)}")
        mode = 0o666 & ~_umask()
        for name, final in finals.items():
            os.chmod(self.staging / name, mode)
            os.replace(self.staging / name, final)
        return finals
