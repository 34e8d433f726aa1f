"""The build's kernel stages through the solid cache (:mod:`ductgen.cache`).

A solid's entry is keyed by the design's numbers (the frozen :class:`~ductgen.design.Design`
without its name and warnings: the spec's text, name and ``[flow]`` keys do not enter), the
solid kind, the STL quality, the ductgen version, the source of the packages that make solids
and the CAD kernel's versions. It holds the STEP and STL bytes and every number the report
and the later stages take from the solid (volumes, areas, face count, the STL mesh for the
print checks and the preview). The insert's bed-size pieces are keyed by the insert's key and
the split inputs. On a hit the STEP's product name and time stamp are set for this build
(:func:`~ductgen.solids.step_text.stamp_step`), so the files equal a fresh build's; a build
whose every solid hits starts no kernel work for them.
"""

from __future__ import annotations

import functools
import time
from collections.abc import Callable
from concurrent.futures import Future, wait
from dataclasses import replace
from pathlib import Path
from typing import Any

from ductgen.cache import Cache, fingerprint, kernel_versions, source_fingerprint
from ductgen.design import Design
from ductgen.design.identity import design_fields
from ductgen.errors import DuctgenError
from ductgen.pipeline.ahead import Claim
from ductgen.pipeline.cache_entries import (
    checks_from,
    checks_to,
    pieces_from_entry,
    solid_from_entry,
    solid_to_entry,
)
from ductgen.report import MeshChecks, mesh_checks
from ductgen.solids.handoff import (
    flat_solid_job,
    insert_bodies_job,
    placed_solid_job,
    step_solid_job,
)
from ductgen.solids.jobs import build_solids
from ductgen.solids.kinds import INSERT_BODIES
from ductgen.solids.results import InsertPiece, SolidResult
from ductgen.solids.split import split_insert_job
from ductgen.spec.model import Spec
from ductgen.tolerances import STL_QUALITY
from ductgen.worker import KernelWorker

__all__ = ["Beside", "SolidStage", "design_key"]

#: Starts ``job(*args)`` in the side worker and returns its future.
Beside = Callable[..., Future[Any]]
#: Told the insert's result (:meth:`SolidStage.solids`'s ``checked`` and ``written``).
Told = Callable[[SolidResult], None] | None

#: What makes the record's checks on the solids' meshes (:meth:`SolidStage.mesh_checks`):
#: the code and the print materials' table (density, heat-deflection temperature).
_CHECK_SOURCES = (
    "report.py",
    "printability.py",
    "solids/bed.py",
    "meshstats.py",
    "data/materials.csv",
)

#: What makes a solid: the packages and modules whose source enters the key.
_SOLID_SOURCES = (
    "solids",
    "geometry",
    "design",
    "tolerances.py",
    "units.py",
    "meshstats.py",
    "stamp.py",
    "cache.py",
)


@functools.cache
def _code_key() -> str:
    return fingerprint(kernel_versions(), source_fingerprint(_SOLID_SOURCES))


def design_key(d: Design) -> str | None:
    """The key of ``d``'s solids (None when the design holds something the hash cannot
    read: then nothing is cached)."""
    try:
        return fingerprint("design", design_fields(d), _code_key())
    except TypeError:
        return None


class SolidStage:
    """The solids and the insert split of one build, hits from ``cache``, misses from the
    caller's kernel worker (its process starts on first use, so a build whose every solid
    hits starts none).

    Attributes:
        hits, misses: solid kinds (and ``"insert split"``) served from the cache or built.
    """

    def __init__(
        self,
        cache: Cache | None,
        design: Design,
        quality: str,
        worker: KernelWorker,
    ) -> None:
        self.cache = cache
        self.design = design
        self.quality = quality
        self.worker = worker
        self.dkey = design_key(design) if cache is not None else None
        self.keys: dict[str, str] = {}
        self.hits: list[str] = []
        self.misses: list[str] = []

    def _key(self, *parts: Any) -> str | None:
        if self.cache is None or self.dkey is None:
            return None
        return fingerprint(self.dkey, STL_QUALITY[self.quality], *parts)

    def builds_beside(self, kinds: list[str]) -> bool:
        """Whether :meth:`solids` would use the side worker for ``kinds``: the insert and
        another kind not in the cache (so the build can start the side worker's imports
        early, :func:`~ductgen.solids.warm.warm_up`)."""
        missing = [
            k
            for k in kinds
            if (key := self._key("solid", k, self.quality)) is None
            or self.cache is None
            or not self.cache.has(key)
        ]
        return "insert" in missing and len(missing) > 1

    def solids(
        self,
        kinds: list[str],
        prefix: str,
        staging: Path,
        beside: Beside | None = None,
        checked: Told = None,
        written: Told = None,
    ) -> dict[str, SolidResult]:
        """Per kind what :func:`ductgen.solids.jobs.build_solids` returns, its files staged.
        ``beside``: starts a job in the side worker (see :meth:`_build`); ``checked``:
        called with the insert's result as soon as the side worker has checked it (its
        STEP may still be being written), on that job's thread; ``written``: called with
        it, on this thread, once the kernel worker has written its STEP and is free for its
        next job (the split) while the side worker may still finish the others."""
        got: dict[str, SolidResult] = {}
        missing = []
        for kind in kinds:
            t0 = time.perf_counter()
            key = self._key("solid", kind, self.quality)
            entry = None if key is None or self.cache is None else self.cache.get(key)
            if key is not None:
                self.keys[kind] = key
            if entry is None:
                missing.append(kind)
                continue
            got[kind] = solid_from_entry(entry, kind, prefix, staging, t0)
            self.hits.append(kind)
        if missing:
            built = self._build(missing, prefix, staging, beside, (checked, written))
            for kind in missing:
                got[kind] = built[kind]
                self.misses.append(kind)
                if kind in self.keys and self.cache is not None:
                    self.cache.put(self.keys[kind], *solid_to_entry(built[kind], staging))
        return {k: got[k] for k in kinds}

    def _build(
        self,
        kinds: list[str],
        prefix: str,
        staging: Path,
        beside: Beside | None,
        told: tuple[Told, Told] = (None, None),
    ) -> dict[str, SolidResult]:
        """Build ``kinds`` in the kernel worker; with ``beside`` and the insert among other
        kinds, the others are finished in the side worker meanwhile: the kernel worker
        builds the cutter in design coordinates first (the insert is cut with it; on a flat
        skin the side worker makes the insert's outer body meanwhile), hands it over as a
        binary B-rep (:func:`~ductgen.solids.handoff.flat_solid_job`) and builds the
        insert, which it hands over too (:meth:`_insert_beside`; a curved or panel insert
        placed on its skin first, once), writes as STEP and splits next from the shape it
        keeps; the side worker checks and writes the cutter, builds the plug (unless the
        kernel worker did, waiting for the outer body: :meth:`_plug_while`), checks and
        writes it, and checks the insert and writes its STL. Should the side worker not have
        started on the outer body by then (a command line's first build: its imports take
        ~2.5 s beside the kernel worker's), the insert's job makes it here instead and the
        side worker skips it (:class:`~ductgen.pipeline.ahead.Claim`). Each kind's files are
        the same bytes either way. When both fail, the error of the kind that comes first in
        ``kinds`` is raised, as when one worker builds them one after another. ``told``: the
        insert's ``checked`` and ``written`` callbacks (:meth:`solids`)."""
        args, (checked, written) = (self.quality, prefix, str(staging)), told
        others = [k for k in kinds if k != "insert"]
        if beside is None or "insert" not in kinds or not others:
            return self.worker.run(build_solids, self.design, kinds, *args)
        flat_skin = self.design.skin.is_flat
        # the insert's outer body, made beside while the cutter is built here
        claim = Claim()
        bodies = (
            beside(insert_bodies_job, self.design, picture=False, wanted=claim.start)
            if flat_skin
            else None
        )
        flats = {}
        if "cutter" in others:
            flats["cutter"] = self.worker.run(flat_solid_job, self.design, "cutter")
        side = beside(
            build_solids, self.design, others, *args, self._plug_while(bodies, flats, others)
        )
        if bodies is not None and not bodies.done() and claim.take():
            bodies = None  # the side worker still imports: the insert's job makes it here
        try:
            main = self._insert_beside(flats, bodies, prefix, staging, beside, checked)
            if written is not None:
                written(main["insert"])
        except DuctgenError as err:
            wait([side])
            first = side.exception()
            if isinstance(first, DuctgenError) and _rank(first, kinds) < _rank(err, kinds):
                raise first from None
            raise
        return {**side.result(), **main}

    def _plug_while(
        self, bodies: Future[bytes] | None, flats: dict[str, bytes], others: list[str]
    ) -> dict[str, bytes]:
        """``flats`` for the side worker: with the plug built here when the insert's outer
        body (``bodies``, made beside) is not ready yet, so the kernel worker builds it instead
        of waiting (the drone sample's side worker, its longer chain, then only checks and
        writes it). The same solid to the last bit either way; a plug that fails here is
        built again there, which raises its error in the order of the kinds."""
        if bodies is None or bodies.done() or "plug" not in others:
            return flats
        try:
            return {**flats, "plug": self.worker.run(flat_solid_job, self.design, "plug")}
        except DuctgenError:
            return flats

    def _insert_beside(
        self,
        flats: dict[str, bytes],
        bodies: Future[bytes] | None,
        prefix: str,
        staging: Path,
        beside: Beside,
        checked: Told,
    ) -> dict[str, SolidResult]:
        """The insert built here (cut with the cutter in ``flats``; on a flat skin from the
        outer body made ``bodies`` beside, :func:`~ductgen.solids.handoff.insert_bodies_job`;
        on a curved one placed here too, once: the map takes seconds) and handed over:
        checked and its STL written ``beside`` while its STEP is written here (the same
        files as :func:`~ductgen.solids.jobs.build_solids` makes alone; a failed check is
        raised first, as there). Should ``bodies`` have failed, the insert's job makes them
        again and raises that error itself, naming its stage."""
        t0 = time.perf_counter()
        if bodies is not None and bodies.exception() is None:
            flats = {**flats, INSERT_BODIES: bodies.result()}
        placed: dict[str, bytes] = {}
        if self.design.skin.is_flat:
            flat = self.worker.run(flat_solid_job, self.design, "insert", flats)
        else:
            flat, placed["insert"] = self.worker.run(placed_solid_job, self.design, "insert", flats)
        seconds = {"build_s": time.perf_counter() - t0}
        args = (self.quality, prefix, str(staging))
        check = beside(
            build_solids, self.design, ["insert"], *args, {"insert": flat}, False, placed
        )
        if checked is not None:
            check.add_done_callback(lambda f: f.exception() or checked(f.result()["insert"]))
        try:
            seconds |= self.worker.run(
                step_solid_job, self.design, "insert", flat, *args[1:], placed.get("insert")
            )
        except DuctgenError:
            wait([check])
            if isinstance(check.exception(), DuctgenError):
                check.result()  # raises the check's error
            raise
        made = check.result()["insert"]
        return {"insert": replace(made, seconds={**made.seconds, **seconds})}

    def mesh_checks(self, spec: Spec, solids: dict[str, SolidResult]) -> MeshChecks:
        """:func:`~ductgen.report.mesh_checks` of ``solids``, or the same checks made before
        on the same solids (their cache keys: the design, the kind, the quality, the code
        that makes them) with the same ``[insert]`` material keys and ``[print] bed`` by the
        same code and mesh tools, from the cache (a ``[flow]`` change or a rebuild elsewhere
        runs none).
        Only with the insert among them: its thinnest-wall and bed checks are what costs
        (about 0.1–0.2 s on the samples); the cutter's and the plug's alone are not cached."""
        keys = [self.keys.get(k) for k in sorted(solids)]
        ins = spec.insert
        key = (
            None
            if "insert" not in solids or None in keys
            else self._key(
                "mesh checks",
                keys,
                (ins.material, ins.near_heat, ins.service_temperature, spec.print.bed),
                source_fingerprint(_CHECK_SOURCES),
                kernel_versions(("trimesh", "embreex", "numpy", "scipy")),
            )
        )
        entry = None if key is None or self.cache is None else self.cache.get(key)
        if entry is not None:
            return checks_from(entry.meta)
        checks = mesh_checks(spec, self.design, solids)
        if key is not None and self.cache is not None:
            self.cache.put(key, checks_to(checks), {})
        return checks

    def split_insert(
        self,
        staging: Path,
        step_name: str,
        prefix: str,
        plan: tuple[list[float], str],
        bed: tuple[float, float, float],
        frame: tuple[list[float], list[list[float]]] | None,
    ) -> list[InsertPiece]:
        """The insert's bed-size pieces (see :func:`ductgen.solids.split.split_insert_job`)."""
        stations, up = plan
        base = self.keys.get("insert")
        key = None if base is None else self._key("split", base, stations, up, bed, frame)
        entry = None if key is None or self.cache is None else self.cache.get(key)
        if entry is not None:
            self.hits.append("insert split")
            return pieces_from_entry(entry, prefix, staging)
        made = self.worker.run(
            split_insert_job,
            str(staging),
            step_name,
            prefix,
            stations,
            bed,
            up,
            self.quality,
            frame,
        )
        pieces = made
        self.misses.append("insert split")
        if key is not None and self.cache is not None:
            blobs = {}
            for k, p in enumerate(pieces):
                for fmt in ("step", "stl"):
                    blobs[f"{fmt}{k}"] = (staging / getattr(p, fmt)).read_bytes()
            meta = [
                {k: v for k, v in p.as_dict().items() if k not in ("step", "stl")} for p in pieces
            ]
            self.cache.put(key, {"pieces": meta}, blobs)
        return pieces


def _rank(err: DuctgenError, kinds: list[str]) -> int:
    """Where the kind ``err`` names (its stage's first word) comes in ``kinds``."""
    kind = getattr(err, "stage", "").split(" ")[0]
    return kinds.index(kind) if kind in kinds else len(kinds)
