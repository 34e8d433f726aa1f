"""CFD cross-check of the airflow estimate with OpenFOAM (``ductgen cfd``).

Layer: between ``sweep`` and ``pipeline`` (it may use pipeline, report, design, solids'
outputs and flow; the sweep may use it). Modules: ``gci`` (pure grid-convergence
arithmetic), ``surface`` (the wetted surface from the cutter), ``fields`` and ``templates``
(the case's dictionaries), ``case`` (case numbers and writing), ``runner`` (OpenFOAM tools),
``results`` (reading a solved case), ``pictures`` (offscreen PNGs), ``run`` (the command).
"""

from ductgen.cfd.run import MESH_CHOICES, cfd_for_build, check_inputs, run_cfd

__all__ = ["MESH_CHOICES", "cfd_for_build", "check_inputs", "run_cfd"]
