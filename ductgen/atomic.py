"""Atomic, all-or-nothing file output.

Every output of a build is first written into a hidden staging folder inside the output
directory (same file system, so a rename is atomic), and only moved into place when the
whole build has succeeded. A failed build leaves nothing behind; an existing file is never
overwritten unless ``force`` is set.
"""

from __future__ import annotations

import errno
import os
import shutil
import socket
import tempfile
from collections.abc import Iterable
from pathlib import Path
from types import TracebackType

from ductgen.errors import ExportError, OverwriteError, SpecError

__all__ = [
    "STAGING_PREFIX",
    "OutputSet",
    "check_free",
    "check_out_dir",
    "clean_stale_staging",
    "write_atomic",
]

#: Hidden staging folders are named ``STAGING_PREFIX + host + "-" + pid + "-" + random``,
#: so a later run can tell a dead run's leftovers from a live build's.
STAGING_PREFIX = ".ductgen-staging-"

_DISK_FULL = {errno.ENOSPC, getattr(errno, "EDQUOT", errno.ENOSPC)}


def _host() -> str:
    return "".join(c if c.isalnum() else "_" for c in socket.gethostname())[:40] or "host"


def _existing_ancestor(path: Path) -> Path:
    p = Path(os.path.abspath(path))
    while not p.exists() and p != p.parent:
        p = p.parent
    return p


def check_out_dir(out_dir: Path, option: str = "-o/--out") -> Path:
    """The existing folder where ``out_dir``'s staging folder goes (``out_dir`` itself or
    its nearest existing parent), after checking ``out_dir`` can be a writable folder.

    Raises:
        SpecError: on ``option`` when the path is empty, a file, under a file, or in a
            folder this process may not write to.
    """
    if str(out_dir).strip() == "":
        raise SpecError(option, str(out_dir), "a folder path", "the path is empty")
    base = _existing_ancestor(out_dir)
    if not base.is_dir():
        where = "is" if base == Path(os.path.abspath(out_dir)) else f"is under {base}, which is"
        raise SpecError(
            option, str(out_dir), "a folder (existing or new)", f"the path {where} a file"
        )
    if not os.access(base, os.W_OK | os.X_OK):
        raise SpecError(
            option, str(out_dir), "a folder you may write to", f"{base} is not writable"
        )
    return base


def clean_stale_staging(folder: Path) -> list[Path]:
    """Remove staging folders in ``folder`` left by runs of this host that were killed
    (their process no longer exists); returns what was removed."""
    removed: list[Path] = []
    prefix = f"{STAGING_PREFIX}{_host()}-"
    try:
        entries = list(Path(folder).iterdir())
    except OSError:
        return removed
    for entry in entries:
        if not entry.name.startswith(prefix) or not entry.is_dir():
            continue
        pid_text = entry.name[len(prefix) :].split("-", 1)[0]
        if not pid_text.isdigit():
            continue
        pid = int(pid_text)
        alive = True
        try:
            os.kill(pid, 0)
        except ProcessLookupError:
            alive = False
        except PermissionError:
            alive = True
        if not alive:
            shutil.rmtree(entry, ignore_errors=True)
            removed.append(entry)
    return removed


def _write_error(err: OSError, path: Path) -> ExportError:
    """An :class:`ExportError` that says what went wrong writing ``path``."""
    if err.errno in _DISK_FULL:
        return ExportError(
            f"the disk is full: no space left writing {path.name} in {path.parent}; "
            "nothing was published and existing files are unchanged"
        )
    return ExportError(f"cannot write {path}: {err.strerror or err}")


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
    try:
        path.parent.mkdir(parents=True, exist_ok=True)
        fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    except OSError as err:
        raise _write_error(err, path) from None
    try:
        with os.fdopen(fd, "wb") as fh:
            fh.write(data)
            fh.flush()
            os.fsync(fh.fileno())
        os.chmod(tmp, 0o666 & ~_umask())
        os.replace(tmp, path)
    except OSError as err:
        Path(tmp).unlink(missing_ok=True)
        raise _write_error(err, path) from None
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
        # Stage in the output folder, or in its nearest existing parent while the folder
        # does not exist yet (same file system either way): the folder itself is made
        # only when publishing, so a failed build leaves no empty folder behind.
        base = check_out_dir(self.out_dir)
        clean_stale_staging(base)
        if base != Path(os.path.abspath(self.out_dir)) and self.out_dir.is_dir():
            clean_stale_staging(self.out_dir)
        try:
            self._staging = Path(
                tempfile.mkdtemp(prefix=f"{STAGING_PREFIX}{_host()}-{os.getpid()}-", dir=base)
            )
        except OSError as err:
            if err.errno in _DISK_FULL:
                raise _write_error(err, base / "staging") from None
            # a folder that looks writable but is not (/proc, a read-only mount): bad input
            raise SpecError(
                "-o/--out",
                str(self.out_dir),
                "a folder where files can be created",
                f"cannot create a file in {base}: {err.strerror or err}",
            ) from None
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
        """Move every staged file (or folder) into ``out_dir``; returns name → final path.
        A staged folder replaces an existing folder of the same name whole (``force``)."""
        finals = {n: self.out_dir / n for n in self._names}
        check_free(finals.values(), self.force)
        missing = [n for n in self._names if not (self.staging / n).exists()]
        if missing:
            raise ExportError(f"internal: staged files never written: {', '.join(missing)}")
        mode = 0o666 & ~_umask()
        try:
            self.out_dir.mkdir(parents=True, exist_ok=True)
            for name, final in finals.items():
                staged = self.staging / name
                if staged.is_dir():  # a folder (a CFD case) replaces a folder as a whole
                    os.chmod(staged, 0o777 & ~_umask())
                    if final.is_dir() and not final.is_symlink():  # only with force
                        os.replace(final, self.staging / f".replaced-{name}")
                else:
                    os.chmod(staged, mode)
                os.replace(staged, final)
        except OSError as err:
            raise _write_error(err, self.out_dir / "(publishing)") from None
        return finals
