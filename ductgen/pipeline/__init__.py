"""The build pipeline shared by the CLI and sweeps."""

from ductgen.pipeline.build import BuildResult, build, output_kinds

__all__ = ["BuildResult", "build", "output_kinds"]
