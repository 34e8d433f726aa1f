"""Design sweeps: many variants of one spec built in parallel and compared side by side.

``ductgen sweep SPEC --vary KEY=A:B:STEP`` (see :mod:`ductgen.sweep.vary`) builds each
variant through the same pipeline as ``ductgen build`` into ``DIR/<variant id>/`` and writes
``comparison.csv``, ``comparison.json`` and ``comparison.html`` (see
:mod:`ductgen.sweep.html`).
"""

from ductgen.sweep.results import SweepResult, VariantResult
from ductgen.sweep.run import run_sweep
from ductgen.sweep.vary import Vary, parse_vary

__all__ = ["SweepResult", "VariantResult", "Vary", "parse_vary", "run_sweep"]
