"""Mesh closure (``ductgen.meshstats.mesh_stats``): a zero-area sliver of three distinct
collinear vertices closes a T-junction and keeps a mesh closed (the CAD kernel's mesher
makes them on the small faces of a 5 x 2 mm throat's plug); a face collapsed by merging is
dropped; a real crack stays open."""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from ductgen.meshstats import mesh_stats, without_collapsed

#: A right tetrahedron (unit legs): volume 1/6 (derived: a third of base 1/2 times height 1).
TET = np.array([[0.0, 0.0, 0.0], [1.0, 0.0, 0.0], [0.0, 1.0, 0.0], [0.0, 0.0, 1.0]])
FACES = [(0, 2, 1), (0, 1, 3), (1, 2, 3), (0, 3, 2)]  # outward


def _t_junction(sliver: bool) -> tuple[np.ndarray, np.ndarray]:
    """The tetrahedron with edge 0-1 split at its midpoint on face (0, 1, 3) only; with
    ``sliver`` the zero-area triangle (0, 4, 1) (three collinear points) closes the gap."""
    verts = np.vstack([TET, [[0.5, 0.0, 0.0]]])
    faces = [(0, 2, 1), (0, 4, 3), (4, 1, 3), (1, 2, 3), (0, 3, 2)]
    if sliver:
        faces.append((0, 1, 4))
    return verts, np.array(faces)


def test_the_tetrahedron_is_closed_with_its_volume() -> None:
    closed, winding, volume, _ = mesh_stats(TET, np.array(FACES))
    assert closed and winding
    assert volume == pytest.approx(1.0 / 6.0, rel=1e-12)


def test_a_collinear_sliver_keeps_the_mesh_closed() -> None:
    closed, winding, volume, _ = mesh_stats(*_t_junction(sliver=True))
    assert closed and winding
    assert volume == pytest.approx(1.0 / 6.0, rel=1e-12)


def test_a_t_junction_without_the_sliver_is_a_crack() -> None:
    closed, winding, _, _ = mesh_stats(*_t_junction(sliver=False))
    assert not closed and not winding


def test_a_face_collapsed_by_merging_is_dropped() -> None:
    """Vertex 4 is a copy of vertex 3 a hundredth of the merge distance away: face (3, 4, 0)
    collapses onto an edge when merged and is dropped (the mesh stays closed), while
    (0, 1, 4) becomes a second copy of face (0, 1, 3) and makes the mesh non-manifold."""
    verts = np.vstack([TET, TET[3] + 1e-7])
    assert mesh_stats(verts, np.array([*FACES, (3, 4, 0)]))[0]
    assert not mesh_stats(verts, np.array([*FACES, (0, 1, 4)]))[0]


def test_a_collapsed_face_left_out_reads_back_watertight() -> None:
    """The same collapsed face (3, 4, 0) with vertex 4 5e-12 away, as the kernel's mesher
    left one on a seam: trimesh (an outside reader, merging as an STL reader does) counts
    edge 0-3 in three faces and calls the mesh not watertight; with the faces
    :func:`without_collapsed` keeps it is watertight, and a mesh without such a face comes
    back the same array."""
    trimesh = pytest.importorskip("trimesh")
    verts = np.vstack([TET, TET[3] + 5e-12])
    faces = np.array([*FACES, (3, 4, 0)])
    assert not trimesh.Trimesh(verts, faces).is_watertight
    kept = without_collapsed(verts, faces)
    assert kept.tolist() == [list(f) for f in FACES]
    assert trimesh.Trimesh(verts, kept).is_watertight
    plain = np.array(FACES)
    assert np.array_equal(without_collapsed(TET, plain), plain)


@settings(max_examples=40, deadline=None)
@given(
    shape=st.sampled_from(["sphere", "box", "capsule"]),
    per_facet=st.booleans(),
    seed=st.integers(0, 2**31 - 1),
    flip=st.integers(0, 3),
    drop=st.integers(0, 2),
    repeat=st.integers(0, 2),
)
def test_closure_winding_volume_and_area_are_trimeshs(  # type: ignore[no-untyped-def]
    shape, per_facet, seed, flip, drop, repeat
) -> None:
    """Against trimesh (a reference library from the registry): its ``merge_vertices`` at
    the same digits, ``is_watertight``, ``is_winding_consistent``, ``volume`` and ``area``,
    on closed meshes, their STL form (every facet its own vertices), and copies with faces
    turned over, taken away or repeated (volume where the mesh is closed and consistent: of
    any other, the two sums measure different things)."""
    trimesh = pytest.importorskip("trimesh")
    make = {
        "sphere": lambda: trimesh.creation.icosphere(subdivisions=2, radius=40.0),
        "box": lambda: trimesh.creation.box(extents=(30.0, 20.0, 7.5)),
        "capsule": lambda: trimesh.creation.capsule(height=50.0, radius=8.0, count=(12, 12)),
    }
    mesh = make[shape]()
    rng = np.random.default_rng(seed)
    verts, faces = np.array(mesh.vertices), np.array(mesh.faces)
    picked = rng.choice(len(faces), size=flip + drop + repeat, replace=False)
    faces[picked[:flip]] = faces[picked[:flip], ::-1]
    faces = np.vstack(
        [
            np.delete(faces, picked[flip : flip + drop], axis=0),
            faces[picked[-repeat:]] if repeat else faces[:0],
        ]
    )
    if per_facet:
        verts, faces = verts[faces].reshape(-1, 3), np.arange(3 * len(faces)).reshape(-1, 3)
    ref = trimesh.Trimesh(verts, faces, process=False, validate=False)
    merged = ref.copy()
    merged.merge_vertices(digits_vertex=5)
    closed, winding, volume, area = mesh_stats(verts, faces)
    assert closed == merged.is_watertight
    assert winding == (merged.is_watertight and merged.is_winding_consistent)
    if winding:  # an open or inconsistent mesh encloses no volume; the formulas differ there
        assert volume == pytest.approx(ref.volume, rel=1e-12)
    assert area == pytest.approx(ref.area, rel=1e-12)
