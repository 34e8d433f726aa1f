"""What the design page serves and where its files go: :class:`DesignApp`.

Every path a request names goes through the app's :class:`~ductgen.page.guard.WorkFolder`
(the one folder the page reads and writes); files the page offers for download are only those
a job of this run wrote, each at ``/out/JOB/NAME`` so earlier links keep working.
"""

from __future__ import annotations

import os
import threading
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

from ductgen.errors import SpecError
from ductgen.page.guard import SPEC_SUFFIXES, PathRefused, WorkFolder, new_secret
from ductgen.page.jobs import MAX_SWEEP_VARIANTS, JobRunner
from ductgen.spec.load import FILE_KEYS

__all__ = ["PANEL_SUFFIXES", "DesignApp"]

#: Files a panel skin may be read from (``skin.file``): STEP, or a mesh scan.
PANEL_SUFFIXES = (".step", ".stp", ".stl", ".obj", ".ply")

#: The panel file list stops here (a work folder is a project folder, not a disk).
MAX_LISTED = 200

#: Folders the panel file list does not walk into.
_SKIPPED = (".git", ".venv", "node_modules", "__pycache__")


@dataclass
class DesignApp:
    """The page's state for one run of ``ductgen design``.

    Attributes:
        data: the starting spec as plain data (units as written).
        work: the work folder; every path the page reads or writes lies inside it.
        spec_path: the starting spec file, or None (the starter).
        out_dir: the build folder given on the command line, or None (``WORK/NAME``).
        secret: this run's key (see :mod:`ductgen.page.guard`).
    """

    data: dict[str, Any]
    work: WorkFolder
    spec_path: Path | None = None
    out_dir: Path | None = None
    secret: str = field(default_factory=new_secret)
    jobs: JobRunner = field(default_factory=JobRunner)
    _served: dict[int, tuple[Path, frozenset[str]]] = field(default_factory=dict)
    _lock: threading.Lock = field(default_factory=threading.Lock)

    # --- what the page starts with ---------------------------------------------------------
    def init(self) -> dict[str, Any]:
        from ductgen.page.fields import schema_json, unit_hints
        from ductgen.page.labels import ADD_ITEM, LABELS
        from ductgen.pipeline.builder import output_kinds, package_version

        name = str(self.data.get("name") or "ductgen") if isinstance(self.data, dict) else ""
        start = self._start_shown()
        return {
            "schema": schema_json(),
            "units": unit_hints(),
            "labels": LABELS,
            "add_item": ADD_ITEM,
            "data": self.data,
            "spec_path": start,
            "work_dir": str(self.work.root),
            "save_path": self._save_default(name),
            "out_dir": self.work.show(self.out_dir) if self.out_dir else name,
            "sweep_dir": f"{name}-sweep",
            "output_kinds": output_kinds(),
            "max_sweep_variants": MAX_SWEEP_VARIANTS,
            "version": package_version(),
            "job": self.job_snapshot(),
        }

    def _start_shown(self) -> str:
        if self.spec_path is None:
            return ""
        return self.work.show(self.spec_path)

    def _save_default(self, name: str) -> str:
        """Save as: a new name in the work folder (the spec's name, then ``-2``, ``-3``...),
        so a save never lands on the opened file, nor inside the installed package, unless
        the user types that name and ticks the box."""
        return self.work.free_name(name or "ductgen")

    def panel_files(self) -> list[str]:
        """STEP/STL/OBJ/PLY files inside the work folder (relative names, sorted; no
        symbolic links, no hidden folders; at most :data:`MAX_LISTED`)."""
        found: list[str] = []
        for dirpath, dirs, names in os.walk(self.work.root):  # os.walk does not follow links
            dirs[:] = sorted(d for d in dirs if not d.startswith(".") and d not in _SKIPPED)
            for fn in sorted(names):
                p = Path(dirpath) / fn
                if p.suffix.lower() in PANEL_SUFFIXES and not p.is_symlink() and p.is_file():
                    found.append(p.relative_to(self.work.root).as_posix())
                    if len(found) >= MAX_LISTED:
                        return found
        return found

    # --- paths from requests ---------------------------------------------------------------
    def base_dir(self, body: dict[str, Any]) -> Path:
        """The folder the spec's relative file names are read from: the folder of the spec
        the page has open (inside the work folder, or the starting spec's own)."""
        text = body.get("spec_path")
        if not text:
            return self.work.root
        if self.spec_path is not None and text == self._start_shown():
            return Path(os.path.realpath(self.spec_path)).parent
        return self.work.resolve(text, "spec_path").parent

    def check_files(self, data: Any, base: Path) -> None:
        """Refuse spec keys that name a file outside the work folder (and outside the
        starting spec's own folder)."""
        if not isinstance(data, dict):
            return
        allowed = [self.work.root]
        if self.spec_path is not None:
            allowed.append(Path(os.path.realpath(self.spec_path)).parent)
        for section, key in FILE_KEYS:
            sec = data.get(section)
            value = sec.get(key) if isinstance(sec, dict) else None
            if not isinstance(value, str) or not value.strip():
                continue
            if section != "skin" and not value.strip().lower().endswith(".csv"):
                continue  # a bundled profile name or a constant, not a file
            p = Path(value.strip())
            real = Path(os.path.realpath(p if p.is_absolute() else base / p))
            if not any(real == a or real.is_relative_to(a) for a in allowed):
                raise SpecError(
                    f"{section}.{key}",
                    value,
                    f"a file inside the work folder {self.work.root}",
                    "the design page reads files only inside its work folder",
                )

    def save_target(self, text: Any) -> Path:
        """Where *save* may write: a ``.toml`` file inside the work folder, outside the
        package, that is new or already a ductgen spec."""
        from ductgen.spec import read_spec_data

        path = self.work.writable(text, "save as")
        if path.suffix.lower() != ".toml":
            raise PathRefused(f"save as {text!r}: the page saves .toml spec files only")
        if path.is_symlink() or (path.exists() and not path.is_file()):
            raise PathRefused(f"save as {text!r} is not a regular file")
        if path.exists():
            try:
                old = read_spec_data(path)
            except SpecError:
                old = {}
            if not ("name" in old and "throat" in old):
                raise PathRefused(
                    f"save as {text!r}: that file exists and is not a ductgen spec; the page "
                    "replaces only its own spec files"
                )
        return path

    def open_target(self, text: Any) -> Path:
        """What *open* may read: a spec file (by suffix) inside the work folder."""
        path = self.work.resolve(text, "open")
        if path.suffix.lower() not in SPEC_SUFFIXES:
            raise PathRefused(f"open {text!r}: the page opens spec files (.toml, .yaml, .json)")
        if not path.is_file():
            raise PathRefused(f"open {text!r}: no such spec file in {self.work.root}")
        return path

    def out_target(self, text: Any, default: str) -> Path:
        """A build or sweep folder inside the work folder (``default`` when none is given)."""
        if not isinstance(text, str) or not text.strip():
            text = default
        return self.work.writable(text, "out")

    # --- files the jobs wrote --------------------------------------------------------------
    def job_snapshot(self) -> dict[str, Any]:
        """The job's state with every finished job's files registered for ``/out/``."""
        s = self.jobs.snapshot()
        if s.get("status") == "done" and "id" in s:
            self._register(s)
            s["base_url"] = f"/out/{s['id']}/"
            if s.get("out_dir"):
                s["out_dir"] = self.work.show(Path(s["out_dir"]))
        return s

    def _register(self, s: dict[str, Any]) -> None:
        job = int(s["id"])
        with self._lock:
            if job in self._served:
                return
            folder = Path(s["out_dir"]).resolve()
            self._served[job] = (folder, frozenset(s.get("written", ())))

    def served_file(self, rel: str) -> Path | None:
        """The file at ``/out/JOB/NAME`` when job JOB of this run wrote NAME, else None."""
        self.job_snapshot()  # a finished job registers its files
        job_text, _, name = rel.partition("/")
        if not job_text.isdigit():
            return None
        with self._lock:
            entry = self._served.get(int(job_text))
        if entry is None or name not in entry[1]:
            return None
        folder, _ = entry
        target = folder / name
        real = Path(os.path.realpath(target))
        if not real.is_relative_to(folder) or target.is_symlink() or not real.is_file():
            return None
        return real
