"""Points where two surfaces meet, in the planes normal to a curve near them (CAD kernel
data, evaluated by :mod:`ductgen.solids.batch_eval`; mm). Used by
:mod:`ductgen.solids.intersection`.

:func:`meet` solves, for every row at once, S₁(u₁, v₁) = S₂(u₂, v₂) and tan·(X − x₀) = 0 for
(u₁, v₁, u₂, v₂) by Newton's method from the given parameters (one linear solve per row and
iteration).
"""

from __future__ import annotations

from typing import Any

import numpy as np

from ductgen.solids.batch_eval import Surface

__all__ = ["END_GAP_MM", "END_MOVE_MM", "SINGULAR", "TOUCH_MM", "TOUCH_MOVE_MM", "meet"]


def meet(
    s: list[Surface],
    x0: np.ndarray,
    tan: np.ndarray,
    w: np.ndarray,
    ends: np.ndarray | None = None,
) -> Any:
    """Newton's method for every row at once (see the module docstring): (points, w), or
    None when a row does not converge to 1e-11 mm within 12 steps or strays 1e-3 mm.

    Where the two surfaces are tangent (an edge ending where its faces touch) the Jacobian
    is singular and a full step can throw the row away. When a row fails, all are solved
    again taking there the least-norm step (the pseudo-inverse, singular values below
    :data:`SINGULAR` of the largest dropped), which reaches the surfaces' nearest approach;
    such a row is done once they are within :data:`TOUCH_MM` there, and kept only within
    :data:`TOUCH_MOVE_MM` of the old curve: faces tangent all along an edge (an edge round's
    boundary) touch in a band, and a point there slid up to 1.5e-4 mm along it. (Only on a
    failure: the least-norm step moves a converging row's last digits, and with them a
    mesh.)

    ``ends`` (bool per row): rows at an edge's end, its vertex. Where two fitted faces
    become tangent at a vertex they need not touch there: their nearest approach was
    3.5e-7 mm at the ends of the side-pod insert's transition edges, and every other row of
    those edges converged. Such a row, singular and still apart after the steps, is done at
    the midpoint of the two surfaces' points if they are within :data:`END_GAP_MM` and it
    lies within :data:`END_MOVE_MM` of the old end (the vertex's tolerance then covers
    it)."""
    got = _newton_pass(s, x0, tan, w, least_norm=False)
    if got is not None:
        return got
    return _newton_pass(s, x0, tan, w, True, ends)


def _newton_pass(
    s: list[Surface],
    x0: np.ndarray,
    tan: np.ndarray,
    w: np.ndarray,
    least_norm: bool,
    ends: np.ndarray | None = None,
) -> Any:
    w = w.copy()
    pts = np.empty_like(x0)
    todo = np.arange(len(w))
    singular = np.zeros(len(w), dtype=bool)
    for _ in range(12):
        a, b = s[0].at(w[todo, :2]), s[1].at(w[todo, 2:])
        r = np.concatenate(
            [a[:, 0] - b[:, 0], np.einsum("ij,ij->i", tan[todo], a[:, 0] - x0[todo])[:, None]],
            axis=1,
        )
        res = np.max(np.abs(r), axis=1)
        done = (res < 1e-11) | (singular[todo] & (res < TOUCH_MM))
        pts[todo[done]] = a[done, 0]
        keep = ~done
        todo, a, b, r = todo[keep], a[keep], b[keep], r[keep]
        if not len(todo):
            break
        jac = np.zeros((len(todo), 4, 4))
        jac[:, :3, 0], jac[:, :3, 1], jac[:, :3, 2], jac[:, :3, 3] = (
            a[:, 1],
            a[:, 2],
            -b[:, 1],
            -b[:, 2],
        )
        jac[:, 3, 0] = np.einsum("ij,ij->i", tan[todo], a[:, 1])
        jac[:, 3, 1] = np.einsum("ij,ij->i", tan[todo], a[:, 2])
        step = _steps(jac, r, singular, todo, least_norm)
        if step is None:
            return None
        w[todo] += step
    apart = np.zeros(len(w), dtype=bool)
    if len(todo) and ends is not None and np.all(singular[todo] & ends[todo]):
        a, b = s[0].at(w[todo, :2]), s[1].at(w[todo, 2:])
        pts[todo] = 0.5 * (a[:, 0] + b[:, 0])
        if np.all(np.linalg.norm(a[:, 0] - b[:, 0], axis=1) < END_GAP_MM):
            apart[todo] = True
            todo = todo[:0]
    moved = np.linalg.norm(pts - x0, axis=1)
    touch = singular & ~apart
    if (
        len(todo)
        or np.any(moved > 1e-3)
        or np.any(moved[touch] > TOUCH_MOVE_MM)
        or np.any(moved[apart] > END_MOVE_MM)
    ):
        return None
    return pts, w


#: A Jacobian whose smallest singular value is below this fraction of its largest is
#: treated as singular (the surfaces tangent there).
SINGULAR = 1e-7
#: Surfaces tangent at a point are taken to meet there when this close (mm): a quarter of
#: the deviation :mod:`ductgen.solids.tighten` rebuilds edges to.
TOUCH_MM = 5e-9
#: ... and such a point is kept no farther than this (mm) from the old curve.
TOUCH_MOVE_MM = 1e-6
#: Surfaces tangent at an edge's end that pass this close (mm) there end the edge at the
#: midpoint between them (:func:`meet`'s ``ends``) ...
END_GAP_MM = 1e-6
#: ... when that lies this close (mm) to the old end.
END_MOVE_MM = 1e-4


def _steps(
    jac: np.ndarray, r: np.ndarray, singular: np.ndarray, todo: np.ndarray, least_norm: bool
) -> Any:
    """Newton steps (N, 4) for the rows ``todo``: solved, or with ``least_norm`` the
    least-norm step where the Jacobian is singular (those rows marked in ``singular``);
    None when one is not finite."""
    if least_norm:
        sv = np.linalg.svd(jac, compute_uv=False)
        flat = sv[:, -1] < SINGULAR * sv[:, 0]
    else:
        flat = np.zeros(len(jac), dtype=bool)
    singular[todo[flat]] = True
    step = np.empty((len(jac), 4))
    try:
        if np.any(~flat):
            step[~flat] = np.linalg.solve(jac[~flat], -r[~flat][:, :, None])[:, :, 0]
    except np.linalg.LinAlgError:
        return None
    if np.any(flat):
        step[flat] = np.einsum("nij,nj->ni", np.linalg.pinv(jac[flat], rcond=SINGULAR), -r[flat])
    return step if np.all(np.isfinite(step)) else None
