"""The solid cache: keys from the design's numbers, byte-identical hits, corrupt entries
rebuilt, concurrent builds, ``--no-cache``, the size bound.

Sources: the XDG Base Directory Specification (freedesktop.org, version 0.8) for the
default folder (``$XDG_CACHE_HOME``, else ``$HOME/.cache``); FIPS 180-4 (SHA-256) for the
entry checksum; ISO 10303-21 for the STEP header's ``FILE_NAME`` and the ``PRODUCT``
entity. Every check here compares a cached build with an uncached build of the same spec,
or a stored entry with what was stored, never with a value of ductgen's own.
"""

from __future__ import annotations

import json
import os
import subprocess
import sys
from pathlib import Path

import numpy as np
import pytest
import tomllib

from ductgen.cache import Cache, cache_root, cached_bytes, fingerprint, open_cache
from ductgen.design import build_design
from ductgen.design.identity import design_sha256
from ductgen.errors import SpecError
from ductgen.export.template import template_files
from ductgen.pipeline import build
from ductgen.pipeline.solid_cache import design_key
from ductgen.solids.step_text import stamp_step
from ductgen.spec import Spec, parse_spec
from ductgen.worker import KernelWorker
from tests.conftest import GOOD, ROOT

#: What a full build of FLOWED makes in the kernel (its insert is split for the default bed).
ALL = ["cutter", "insert", "plug", "insert split"]
FLOWED = GOOD + '\n[flow]\nspeed = "100 km/h"\nrun_length = "1 m"\n'


def _spec(text: str) -> Spec:
    return parse_spec(tomllib.loads(text))


def _files(folder: Path) -> dict[str, bytes]:
    return {p.name: p.read_bytes() for p in sorted(folder.iterdir())}


def _no_kernel(*_a: object, **_k: object) -> None:
    raise AssertionError("a kernel job ran")


def _entries(root: Path) -> list[Path]:
    return sorted(root.glob("*/*.entry"))


# --- keys (no kernel) ---------------------------------------------------------------------


def test_key_ignores_name_and_flow_and_follows_geometry() -> None:
    spec = _spec(FLOWED)
    key = design_key(build_design(spec))
    renamed = spec.model_copy(update={"name": "other-name"})
    faster = spec.model_copy(update={"flow": spec.flow.model_copy(update={"speed": 50.0})})
    steeper = spec.model_copy(update={"ramp": spec.ramp.model_copy(update={"angle_deg": 7.001})})
    assert key is not None
    assert design_key(build_design(renamed)) == key
    assert design_key(build_design(faster)) == key
    assert design_key(build_design(steeper)) != key
    ids = {design_sha256(build_design(s)) for s in (spec, renamed, faster)}
    assert len(ids) == 1 and None not in ids
    assert design_sha256(build_design(steeper)) not in ids


def test_the_template_is_drawn_from_the_design_not_the_flow() -> None:
    """Two specs that differ in ``[flow]`` get byte-identical templates, stamped with the
    design's hash (the one ``report.json`` carries); a changed ramp angle changes it."""
    spec = _spec(FLOWED)
    faster = spec.model_copy(update={"flow": spec.flow.model_copy(update={"speed": 50.0})})
    a, b = (template_files(build_design(s), s) for s in (spec, faster))
    assert a == b
    h = design_sha256(build_design(spec))
    assert h is not None and f"design sha256 {h[:16]}".encode() in a["template.dxf"]
    steeper = spec.model_copy(update={"ramp": spec.ramp.model_copy(update={"angle_deg": 7.5})})
    assert h[:16].encode() not in template_files(build_design(steeper), steeper)["template.dxf"]


def test_key_is_the_same_in_another_process() -> None:
    """Another interpreter (another string-hash seed) computes the same key."""
    code = (
        "from ductgen.spec import parse_spec; from ductgen.design import build_design;"
        "from ductgen.pipeline.solid_cache import design_key; import sys, tomllib;"
        "print(design_key(build_design(parse_spec(tomllib.loads(sys.stdin.read())))))"
    )
    env = {**os.environ, "PYTHONPATH": str(ROOT), "PYTHONHASHSEED": "12345"}
    out = subprocess.run(
        [sys.executable, "-c", code], input=FLOWED, env=env, capture_output=True, text=True
    )
    assert out.returncode == 0, out.stderr
    assert out.stdout.strip() == design_key(build_design(_spec(FLOWED)))


def test_fingerprint_reads_floats_exactly_and_sets_in_any_order() -> None:
    assert fingerprint(0.1 + 0.2) != fingerprint(0.3)  # 0x1.3333333333334p-2 vs ...333p-2
    assert fingerprint({"b", "a", "c"}) == fingerprint({"c", "b", "a"})
    a = np.arange(6.0).reshape(2, 3)
    assert fingerprint(a) == fingerprint(a.copy()) != fingerprint(a.T.copy())
    assert fingerprint(a) != fingerprint(a.astype(np.float32))


# --- the store (no kernel) ----------------------------------------------------------------


def test_entry_round_trip_and_corrupt_entries_are_misses(tmp_path: Path) -> None:
    c = Cache(tmp_path, 10**7)
    mesh = np.linspace(0.0, 1.0, 12, dtype=np.float32).reshape(4, 3)
    assert not c.has("ab" + "0" * 62)
    c.put("ab" + "0" * 62, {"volume_mm3": 0.1 + 0.2}, {"step": b"ISO-10303-21;", "v": mesh})
    assert c.has("ab" + "0" * 62) and not c.has("ab" + "1" * 62)
    got = c.get("ab" + "0" * 62)
    assert got is not None
    assert got.meta == {"volume_mm3": 0.1 + 0.2}  # JSON keeps a float's every bit
    assert got.blobs["step"] == b"ISO-10303-21;"
    assert got.blobs["v"].dtype == np.float32 and np.array_equal(got.blobs["v"], mesh)
    (path,) = _entries(tmp_path)
    raw = path.read_bytes()
    path.write_bytes(raw[:-1] + bytes([raw[-1] ^ 1]))  # one bit flipped in the payload
    assert c.get("ab" + "0" * 62) is None
    assert not path.exists()  # removed, so the next build stores a good one
    c.put("ab" + "0" * 62, {}, {"x": b"0123456789"})
    path.write_bytes(path.read_bytes()[:-4])  # truncated
    assert c.get("ab" + "0" * 62) is None


def test_eviction_keeps_the_bound_and_the_recently_used(tmp_path: Path) -> None:
    c = Cache(tmp_path, 3300)
    keys = [f"{k:02d}" + "f" * 62 for k in range(8)]
    for k in keys[:3]:
        c.put(k, {}, {"x": bytes(900)})
    for i, k in enumerate(keys[:3]):  # distinct ages, the first one used last
        os.utime(c._path(k), (1000.0 + i, 1000.0 + i))
    assert c.get(keys[0]) is not None  # now the most recently used
    for k in keys[3:]:
        c.put(k, {}, {"x": bytes(900)})
        assert sum(p.stat().st_size for p in _entries(tmp_path)) <= 3300
    assert c.get(keys[-1]) is not None
    assert c.get(keys[1]) is None and c.get(keys[2]) is None


def test_cached_bytes_makes_once_per_key(tmp_path: Path) -> None:
    """What the sheet, the picture and the plate go through: made once per key, then read;
    another part is another key; an unreadable part, or an entry without the bytes, is made."""
    store = Cache(tmp_path, 10**7)
    made: list[int] = []

    def make() -> bytes:
        made.append(1)
        return b"x" * len(made)

    assert cached_bytes(store, ("a", 1.0), make) == b"x"
    assert cached_bytes(store, ("a", 1.0), make) == b"x" and len(made) == 1
    assert cached_bytes(store, ("a", 1.5), make) == b"xx" and len(made) == 2
    assert cached_bytes(store, ("a", object()), make) == b"xxx"  # no readable state
    store.put(fingerprint("b"), {}, {"other": b"?"})
    assert cached_bytes(store, ("b",), make) == b"xxxx"
    assert cached_bytes(None, ("a", 1.0), make) == b"xxxxx"


def test_leftovers_of_an_interrupted_store_are_removed_later(tmp_path: Path) -> None:
    c = Cache(tmp_path, 10**6)
    (tmp_path / "ab").mkdir()
    old, fresh = tmp_path / "ab" / ".tmp-old", tmp_path / "ab" / ".tmp-fresh"
    old.write_bytes(b"half an entry")
    fresh.write_bytes(b"being written now")
    os.utime(old, (1000.0, 1000.0))
    c.evict()
    assert not old.exists() and fresh.exists()


def test_cache_folder_and_size_from_the_environment(
    tmp_path: Path, monkeypatch: pytest.MonkeyPatch
) -> None:
    monkeypatch.delenv("DUCTGEN_CACHE_DIR")
    monkeypatch.setenv("XDG_CACHE_HOME", str(tmp_path / "xdg"))
    assert cache_root() == tmp_path / "xdg" / "ductgen"
    monkeypatch.delenv("XDG_CACHE_HOME")
    monkeypatch.setenv("HOME", str(tmp_path / "home"))
    assert cache_root() == tmp_path / "home" / ".cache" / "ductgen"
    monkeypatch.setenv("DUCTGEN_CACHE_DIR", str(tmp_path / "c"))
    monkeypatch.setenv("DUCTGEN_CACHE_MB", "0")
    assert open_cache() is None
    monkeypatch.setenv("DUCTGEN_CACHE_MB", "12")
    store = open_cache()
    assert store is not None and store.limit_bytes == 12 * 1024 * 1024
    assert open_cache(enabled=False) is None
    for bad in ("lots", "-1", "nan"):
        monkeypatch.setenv("DUCTGEN_CACHE_MB", bad)
        with pytest.raises(SpecError) as err:
            open_cache()
        assert "DUCTGEN_CACHE_MB" in str(err.value) and ">= 0" in str(err.value)


def test_step_product_name_is_set_whatever_the_line_breaks(
    monkeypatch: pytest.MonkeyPatch,
) -> None:
    """The writer breaks the PRODUCT entity where its line gets long; the stamped text is
    the same for any break and any earlier name (ISO 10303-21: white space between tokens
    carries no meaning)."""
    monkeypatch.setenv("SOURCE_DATE_EPOCH", "1700000000")  # 2023-11-14T22:13:20 UTC
    head = b"FILE_NAME('Open CASCADE Shape Model','2001-01-01T00:00:00',('Author'),(\n"
    wraps = [
        b"#7 = PRODUCT('a-very-long-name-cutter','a-very-long-name-cutter','',\n  (#8));\n",
        b"#7 = PRODUCT('abc-cutter','abc-cutter','',(#8\n  ));\n",
        b"#7 = PRODUCT('x','x','',(#8));\n",
        # a break before a comma (seen on a jig's product name)
        b"#7 = PRODUCT('kitcar-sidepod-cooler-jig 7','kitcar-sidepod-cooler-jig 7'\n  ,'',(#8));\n",
    ]
    want = (
        b"FILE_NAME('Open CASCADE Shape Model','2023-11-14T22:13:20',('Author'),(\n"
        b"#7 = PRODUCT('t-cutter','t-cutter','',(#8));\n"
    )
    for w in wraps:
        assert stamp_step(head + w, "t-cutter") == want


# --- builds through the kernel ------------------------------------------------------------


@pytest.mark.slow
def test_hit_gives_the_files_of_an_uncached_build(tmp_path: Path) -> None:
    """A renamed spec built from the cache equals the same spec built without it, byte for
    byte, every output; the same spec again draws nothing; a flow-only change then builds no
    solid, starts no kernel and draws no template."""
    spec = _spec(FLOWED)
    first = build(spec, tmp_path / "first")
    assert first.cache == {"hits": [], "misses": ALL}
    renamed = spec.model_copy(update={"name": "renamed"})
    hit = build(renamed, tmp_path / "hit")
    assert hit.cache == {"hits": ALL, "misses": []}
    fresh = build(renamed, tmp_path / "fresh", cache=False)
    assert fresh.cache == {"hits": [], "misses": ALL}
    a, b = _files(tmp_path / "hit"), _files(tmp_path / "fresh")
    assert sorted(a) == sorted(b)
    assert {n.rsplit(".", 1)[-1] for n in a} >= {"step", "stl", "dxf", "pdf", "png", "json"}
    assert [n for n in a if a[n] != b[n]] == []
    with pytest.MonkeyPatch.context() as mp:  # the same spec elsewhere: nothing drawn again
        mp.setattr("ductgen.export.template.template_files", _no_kernel)
        mp.setattr("ductgen.sheets.sheet.sheet_pdf", _no_kernel)
        mp.setattr("ductgen.export.threemf.plate_3mf", _no_kernel)
        mp.setattr("ductgen.pipeline.solid_cache.mesh_checks", _no_kernel)  # nor checked
        again = build(spec, tmp_path / "again")
    assert again.cache == {"hits": ALL, "misses": []}
    assert _files(tmp_path / "again") == _files(tmp_path / "first")
    faster = spec.model_copy(update={"flow": spec.flow.model_copy(update={"speed": 40.0})})
    with pytest.MonkeyPatch.context() as mp:  # solids, pieces and preview: no kernel job at all
        mp.setattr(KernelWorker, "run", _no_kernel)  # and the template is not drawn again
        mp.setattr("ductgen.export.template.template_files", _no_kernel)
        mp.setattr("ductgen.pipeline.solid_cache.mesh_checks", _no_kernel)  # nor the meshes
        flow = build(faster, tmp_path / "flow")
    assert flow.cache == {"hits": ALL, "misses": []}
    assert flow.report["flow"] != first.report["flow"]
    assert flow.report["geometry"] == first.report["geometry"]
    assert flow.report["spec_sha256"] != first.report["spec_sha256"]
    assert flow.report["design_sha256"] == first.report["design_sha256"]
    for name in ("t-template.dxf", "t-template.pdf"):
        assert (tmp_path / "flow" / name).read_bytes() == (tmp_path / "first" / name).read_bytes()


def test_print_checks_follow_the_material_not_only_the_solids(tmp_path: Path) -> None:
    """The record's checks on the solids' meshes (thinnest wall, overhangs, bed fit, the
    material's mass and warnings) come from the cache only for the same solids and the same
    ``[insert]`` material keys: another material, with every solid a hit, is checked again
    and its report equals an uncached build's."""
    spec = _spec(GOOD)
    only = ["cutter", "insert", "plug"]
    build(spec, tmp_path / "a", only=only)
    ins = spec.insert.model_copy(update={"material": "PLA"})
    pla = spec.model_copy(update={"insert": ins})
    assert pla.insert.material != spec.insert.material
    cached = build(pla, tmp_path / "b", only=only)
    assert cached.cache["hits"] == [*only, "insert split"]
    fresh = build(pla, tmp_path / "c", only=only, cache=False)
    assert cached.report["print"] == fresh.report["print"]
    assert cached.report["print"]["material"] == "PLA"
    assert cached.report["warnings"] == fresh.report["warnings"]


@pytest.mark.slow
def test_changed_geometry_misses_and_corrupt_entry_is_rebuilt(tmp_path: Path) -> None:
    spec = _spec(GOOD)
    first = build(spec, tmp_path / "a", only=["cutter"])
    root = Path(os.environ["DUCTGEN_CACHE_DIR"])
    assert first.cache["misses"] == ["cutter"] and len(_entries(root)) == 1
    wider = spec.model_copy(update={"throat": spec.throat.model_copy(update={"width": 80.5})})
    other = build(wider, tmp_path / "b", only=["cutter"])
    assert other.cache["misses"] == ["cutter"]
    assert (
        other.report["geometry"]["cutter_volume_mm3"]
        != first.report["geometry"]["cutter_volume_mm3"]
    )
    for p in _entries(root):  # every entry truncated to half
        p.write_bytes(p.read_bytes()[: p.stat().st_size // 2])
    again = build(spec, tmp_path / "c", only=["cutter"])
    assert again.cache["misses"] == ["cutter"]  # rebuilt, not read
    assert _files(tmp_path / "c") == _files(tmp_path / "a")
    assert build(spec, tmp_path / "d", only=["cutter"]).cache["hits"] == ["cutter"]
    assert _files(tmp_path / "d") == _files(tmp_path / "a")


@pytest.mark.slow
def test_no_cache_neither_reads_nor_writes(tmp_path: Path) -> None:
    spec_file = tmp_path / "s.toml"
    spec_file.write_text(GOOD)
    root = Path(os.environ["DUCTGEN_CACHE_DIR"])
    cli = [sys.executable, "-m", "ductgen", "build", str(spec_file), "--only", "cutter", "-q"]
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    run = subprocess.run([*cli, "-o", str(tmp_path / "a"), "--no-cache"], env=env, cwd=ROOT)
    assert run.returncode == 0 and _entries(root) == []  # nothing written
    first = build(_spec(GOOD), tmp_path / "b", only=["cutter"])
    (path,) = _entries(root)
    # a well-formed entry with the wrong STEP: read, it would be published
    store, key = Cache(root, 10**9), path.name.removesuffix(".entry")
    entry = store.get(key)
    assert entry is not None
    store.put(key, entry.meta, {**entry.blobs, "step": b"not the cutter"})
    run = subprocess.run([*cli, "-o", str(tmp_path / "c"), "--no-cache"], env=env, cwd=ROOT)
    assert run.returncode == 0
    assert (tmp_path / "c" / "t-cutter.step").read_bytes() == _files(tmp_path / "b")[
        "t-cutter.step"
    ]
    assert first.cache["misses"] == ["cutter"]
    run = subprocess.run([*cli, "-o", str(tmp_path / "d")], env=env, cwd=ROOT)
    assert (tmp_path / "d" / "t-cutter.step").read_bytes() == b"not the cutter"


@pytest.mark.slow
def test_two_processes_building_one_design_at_once(tmp_path: Path) -> None:
    spec_file = tmp_path / "s.toml"
    spec_file.write_text(GOOD)
    env = {**os.environ, "PYTHONPATH": str(ROOT)}
    cmd = [sys.executable, "-m", "ductgen", "build", str(spec_file), "--only", "cutter,plug"]
    procs = [
        subprocess.Popen([*cmd, "-o", str(tmp_path / n), "--json"], env=env, cwd=ROOT, stdout=-1)
        for n in ("a", "b")
    ]
    reports = [json.loads(p.communicate(timeout=900)[0]) for p in procs]
    assert [p.returncode for p in procs] == [0, 0]
    assert reports[0]["geometry"] == reports[1]["geometry"]
    assert _files(tmp_path / "a") == _files(tmp_path / "b")
    root = Path(os.environ["DUCTGEN_CACHE_DIR"])
    assert len(_entries(root)) == 2  # one entry per solid, whoever renamed it last
    third = build(_spec(GOOD), tmp_path / "c", only=["cutter", "plug"])
    assert third.cache["hits"] == ["cutter", "plug"]
    assert _files(tmp_path / "c") == _files(tmp_path / "a")
