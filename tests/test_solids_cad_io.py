"""Every exported STEP solid, re-read, is one valid solid whose exact (B-rep) volume equals a
fine mesh of the same file; on a flat skin it passes the kernel's argument analyser too.

Checks: the file holds one valid solid; ``GProp`` volume at relative tolerance 1e-9 agrees
with the volume of a 0.005 mm triangulation of the same B-rep to 0.05 % (the acceptance
threshold; measured here: a fine triangulation agrees with the true volume to ~1e-6). The
curve-on-surface deviations left are measured and bounded at 2e-4 mm (the largest found
before healing was 1.1e-4 mm; common practice, no source: 1e-4-1e-3 mm is a usual modelling
tolerance). On a flat skin every STEP file, read back, passes OCCT's argument analyser with
every check mode on (argument type, small edges and self-intersection, the modes of
``BRepAlgoAPI_Check``, among them).
"""

from __future__ import annotations

from collections import Counter

import pytest

from tests.conftest import sample_ids

cq = pytest.importorskip("cadquery")


def _brep_volume(shape) -> float:  # type: ignore[no-untyped-def]
    """The kernel's mass-property volume (mm³) at relative tolerance 1e-9."""
    from OCP.BRepGProp import BRepGProp
    from OCP.GProp import GProp_GProps

    props = GProp_GProps()
    BRepGProp.VolumeProperties_s(shape.wrapped, props, 1e-9, True)
    return float(props.Mass())


def _mesh_volume(shape, linear_mm: float = 0.005) -> float:  # type: ignore[no-untyped-def]
    """The volume (mm³) of a ``linear_mm`` triangulation (divergence theorem)."""
    import numpy as np

    from ductgen.solids.mesh import triangulate

    v, f = triangulate(shape, linear_mm, 0.05)
    t = v[f]
    return float(np.sum(np.einsum("ij,ij->i", t[:, 0], np.cross(t[:, 1], t[:, 2])))) / 6.0


@pytest.mark.slow
@pytest.mark.parametrize("kind", ["cutter", "insert", "plug"])
@pytest.mark.parametrize("name", sample_ids())
def test_step_checks_clean_and_volume_exact(sample_builds: dict, name: str, kind: str) -> None:
    from ductgen.solids.heal import off_surface_edges

    result, folder = sample_builds[name]
    shape = cq.importers.importStep(str(folder / f"{name}-{kind}.step"))
    solids = shape.solids().vals()
    assert len(solids) == 1
    solid = solids[0]
    if result.report["geometry"]["skin"]["shape"] != "flat":
        # on a curved skin the solid is a mapped spline B-rep whose faces are fitted to the
        # mapped surfaces within 1e-4 mm (solids/spline_fit.py): the checks here are
        # validity and the volume of a 0.05 mm triangulation of the file's solid against the
        # build's own STL (the design mesh, mapped) to 1e-3 (each within ~2e-4 of the
        # kernel's adaptive integral, which takes 20-40 s on an insert whose edges were all
        # rebuilt on their faces: ~170-knot surface curves). The argument analyser's checks
        # are in the tests below.
        import trimesh

        assert solid.isValid()
        stl = trimesh.load(folder / f"{name}-{kind}.stl")
        assert _mesh_volume(solid, 0.05) == pytest.approx(stl.volume, rel=1e-3)
        return
    # the argument analyser's modes are checked on every flat STEP file below (its
    # self-intersection mode is the costly one: ~4 s an insert)
    assert solid.isValid()
    assert _brep_volume(solid) == pytest.approx(_mesh_volume(solid), rel=5e-4)
    worst = max((dev for _, dev in off_surface_edges(solid.wrapped)), default=0.0)
    assert worst <= 2e-4, worst


#: Every check mode of the argument analyser.
EVERY_MODE = (
    "ArgumentTypeMode",
    "SelfInterMode",
    "SmallEdgeMode",
    "RebuildFaceMode",
    "TangentMode",
    "MergeVertexMode",
    "MergeEdgeMode",
    "ContinuityMode",
    "CurveOnSurfaceMode",
)


def _analyser_findings(shape, modes: tuple[str, ...] = EVERY_MODE) -> dict[str, int]:  # type: ignore[no-untyped-def]
    """The argument analyser (OCCT's ``BOPAlgo_ArgumentAnalyzer``) with the check ``modes``
    on and the others off: finding kind → count."""
    from OCP.BOPAlgo import BOPAlgo_ArgumentAnalyzer

    a = BOPAlgo_ArgumentAnalyzer()
    a.SetShape1(shape)
    a.SetRunParallel(True)  # findings are counted, not ordered: ~0.55x the time on 2 cores
    for mode in EVERY_MODE:
        setattr(a, mode, mode in modes)
    a.Perform()
    return dict(Counter(str(r.GetCheckStatus()).split(".")[-1] for r in a.GetCheckResult()))


@pytest.mark.slow
def test_the_healed_solids_pass_every_analyser_mode() -> None:
    """The shapes the STEP writer is given (built, placed, healed) pass the argument
    analyser with every mode on, curve-on-surface included: no edge lies farther from its
    faces than its tolerance. A representative subset (the club racer's cutter, insert and
    plug: extrusion walls, edge rounds, the lofted transition, the spigot); every sample
    would take minutes."""
    from ductgen.design import build_design
    from ductgen.solids import jobs
    from ductgen.solids.deform import place
    from ductgen.solids.heal import heal
    from ductgen.spec import load_spec
    from tests.conftest import ROOT

    d = build_design(load_spec(ROOT / "samples" / "club-racer-brake.toml"))
    book, built = jobs.recipes(), {}
    for kind in ("cutter", "insert", "plug"):
        built[kind] = book[kind].build(d, built)
        assert _analyser_findings(heal(place(built[kind], d, kind).wrapped)) == {}, kind


def _step_files(sample_builds: dict, flat: bool, pattern: str = "*.step") -> list:  # type: ignore[type-arg]
    """The STEP files (matching ``pattern``) of the flat-skin samples, or of the others."""
    return [
        path
        for name, (result, folder) in sorted(sample_builds.items())
        if (result.report["geometry"]["skin"]["shape"] == "flat") == flat
        for path in sorted(folder.glob(pattern))
    ]


@pytest.mark.slow
def test_step_files_read_back_pass_every_analyser_mode(sample_builds: dict) -> None:
    """The same check on every STEP file of every flat-skin sample (cutter, insert, its
    bed-size pieces, plug), read back: what a second CAD program's geometry check sees. A
    STEP file carries no per-edge tolerance, and the reader gives each edge the deviation it
    finds at a couple of dozen samples, so an edge passes only if it lies on its faces
    everywhere (the edge round built exactly, boolean edges rebuilt from the true
    intersection: ``solids/edge_round.py``, ``solids/tighten.py``)."""
    files = _step_files(sample_builds, flat=True)
    assert len(files) >= 12
    found = {}
    for path in files:
        shape = cq.importers.importStep(str(path)).val()
        findings = _analyser_findings(shape.wrapped)
        if findings:
            found[path.name] = findings
    assert found == {}


def _closed_faces(shape):  # type: ignore[no-untyped-def]
    """The faces of ``shape`` closed on themselves (a seam edge: a hole's or a tube's wall)."""
    from OCP.BRep import BRep_Tool

    return [
        f
        for f in shape.Faces()
        if any(BRep_Tool.IsClosed_s(e.wrapped, f.wrapped) for e in f.Edges())
    ]


@pytest.mark.slow
def test_curved_step_files_have_no_c0_faces_nor_faces_crossing_themselves(
    sample_builds: dict,
) -> None:
    """Every STEP file of every curved and panel sample, read back, passes the argument
    analyser's continuity check: no face or edge is a C0 spline where the shape is smooth
    (the round duct walls came from a circle's B-spline form with a C0 knot; the curved
    cutters and inserts had 1 and 35-41 such faces). And each face closed on itself (the
    flange's bolt holes, the spigot's walls) passes its self-intersection check: fitted with
    its two seam edges a few micrometres apart, every hole's wall crossed itself (8 on the
    kitcar insert, 40 over the curved inserts and their pieces). The whole solids' check
    takes minutes on an insert (the curve-on-surface mode: the next test)."""
    files = _step_files(sample_builds, flat=False)
    assert len(files) >= 9
    found: dict[str, dict[str, int]] = {}
    closed = 0
    for path in files:
        shape = cq.importers.importStep(str(path)).val()
        findings = Counter(_analyser_findings(shape.wrapped, ("ContinuityMode",)))
        for face in _closed_faces(shape):
            closed += 1
            findings.update(_analyser_findings(face.wrapped, ("SelfInterMode",)))
        if findings:
            found[path.name] = dict(findings)
    assert closed >= 3 * 8  # the bolt holes of three curved inserts, at least
    assert found == {}


@pytest.mark.slow
def test_curved_cutters_and_plugs_have_their_edges_on_their_faces(sample_builds: dict) -> None:
    """The cutters and plugs of the curved and panel samples and the cut panel, read back:
    their edges were rebuilt on the true intersection of their two fitted faces, so the
    argument analyser (every mode) finds nothing on the kitcar sample's plug, and nothing but
    a few edges off their faces on the others: short edges at a corner where two of its
    faces are tangent, whose new surface curve would cross its neighbour's (that edge is kept
    as it was). An edge whose faces become tangent only at its end is rebuilt too
    (``solids/intersection.py``), also where its faces stay apart there (``solids/meet.py``).
    The bounds are ratchets on the counts measured, not outside values: the six cutters
    and plugs 22 findings (23 before the spans that missed the goal were halved, 24 before
    the ends apart, 41 before the tangent ends and the panel cutter's rebuild, 109 before
    any rebuild). The cut panel is clean (17
    findings before its rebuild, 2 while a surface knot met exactly at a sample of an edge
    went unseen)."""
    found = {
        path.name: _analyser_findings(cq.importers.importStep(str(path)).val().wrapped)
        for kind in ("cutter", "plug", "panel")
        for path in _step_files(sample_builds, flat=False, pattern=f"*-{kind}.step")
    }
    assert len(found) == 7
    assert found["kitcar-bonnet-intake-plug.step"] == {}
    assert {kind for f in found.values() for kind in f} <= {"BOPAlgo_InvalidCurveOnSurface"}
    assert found.pop("kitcar-sidepod-cooler-panel.step") == {}
    assert sum(n for f in found.values() for n in f.values()) <= 22, found


@pytest.mark.slow
def test_curved_inserts_have_their_edges_on_their_faces(sample_builds: dict) -> None:
    """Every insert file of the curved and panel samples and its bed-size pieces, read back:
    each edge was rebuilt on the true intersection of its two fitted faces, as the cutters'
    and plugs' are, and the pieces, cut by planes from the healed insert, keep them. The
    analyser's curve-on-surface check then finds 51 edges off a face over the eleven files
    (kit-car 8, round cowling 14, side-pod 29: 31 before the spans of a fit that missed the
    goal were halved, 41 before edges whose faces become tangent at an end, apart, ended
    between them), where the edges as mapped and fitted had 516. A ratchet on the counts
    measured, not an outside value."""
    files = _step_files(sample_builds, flat=False, pattern="*-insert*.step")
    assert len(files) == 11  # kit-car and round cowling: whole + 3 pieces; side-pod: + 2
    found = {
        path.name: sum(
            _analyser_findings(
                cq.importers.importStep(str(path)).val().wrapped, ("CurveOnSurfaceMode",)
            ).values()
        )
        for path in files
    }
    assert sum(found.values()) <= 51, found


@pytest.mark.slow
def test_curved_jigs_have_their_edges_on_their_faces(sample_builds: dict) -> None:
    """Every marking jig file of the curved and panel samples (the whole jig and its
    bed-size pieces), read back, passes the analyser's curve-on-surface check: built on the
    skin with each edge lifted onto its cap's fitted surface and the walls ruled between the
    lifts (``solids/prism_map.py``), no edge is off a face (mapped face by face, 12-22 edges
    a file were 1e-6 to 2.3e-4 mm off). The other modes pass too (~16 s a whole jig: not
    run here)."""
    files = _step_files(sample_builds, flat=False, pattern="*-jig*.step")
    assert len(files) >= 7  # kitcar and side-pod: whole + 2 pieces; round cowling: whole
    found = {}
    for path in files:
        shape = cq.importers.importStep(str(path)).val()
        findings = _analyser_findings(shape.wrapped, ("CurveOnSurfaceMode",))
        if findings:
            found[path.name] = findings
    assert found == {}
