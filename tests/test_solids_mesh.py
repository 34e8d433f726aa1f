"""Mesh refinement (``solids/mesh.py::subdivide_to_size``): checked against closed forms (a
box's volume a·b·c and area 2(ab + bc + ca), which splitting flat faces cannot change) and
against trimesh's own ``remesh.subdivide_to_size``, an independent implementation of the
same refinement."""

from __future__ import annotations

import numpy as np
import pytest

pytest.importorskip("cadquery")
trimesh = pytest.importorskip("trimesh")

from ductgen.solids.mesh import subdivide_to_size  # noqa: E402


def _sorted_triangles(vertices: np.ndarray, faces: np.ndarray) -> np.ndarray:
    tri = np.asarray(vertices)[np.asarray(faces)].reshape(len(faces), -1)
    return tri[np.lexsort(tri.T[::-1])]


def test_a_box_keeps_its_volume_and_area_and_stays_closed() -> None:
    a, b, c = 100.0, 40.0, 10.0
    box = trimesh.creation.box(extents=(a, b, c))
    v, f = subdivide_to_size(box.vertices, box.faces, 7.0)
    edges = np.linalg.norm(v[f] - v[np.roll(f, 1, axis=1)], axis=2)
    assert edges.max() <= 7.0
    assert len(f) > 50 * len(box.faces)
    mesh = trimesh.Trimesh(v, f, process=False)
    # closed forms: the volume a·b·c and the area 2(ab + bc + ca)
    assert mesh.volume == pytest.approx(a * b * c, rel=1e-12)
    assert mesh.area == pytest.approx(2 * (a * b + b * c + c * a), rel=1e-12)
    # one shared midpoint per split edge: no crack, every edge between two faces
    assert mesh.is_watertight and mesh.is_winding_consistent


@pytest.mark.parametrize("step", [0.3, 1.0, 2.5])
def test_the_triangles_are_trimeshs(step: float) -> None:
    rng = np.random.default_rng(7)
    mesh = trimesh.creation.icosphere(subdivisions=1, radius=5.0)
    # uneven triangles, so faces need one, two or three edges split in the same round
    v = mesh.vertices * np.array([3.0, 1.0, 0.4]) + rng.normal(0.0, 0.05, mesh.vertices.shape)
    ref_v, ref_f = trimesh.remesh.subdivide_to_size(v, mesh.faces, step)
    got_v, got_f = subdivide_to_size(v, mesh.faces, step)
    assert np.array_equal(_sorted_triangles(got_v, got_f), _sorted_triangles(ref_v, ref_f))


def test_too_many_rounds_is_an_error() -> None:
    box = trimesh.creation.box(extents=(100.0, 1.0, 1.0))
    with pytest.raises(ValueError, match="max_iter"):
        subdivide_to_size(box.vertices, box.faces, 0.01, max_iter=2)
