"""The build pipeline shared by the CLI and sweeps."""

from ductgen.pipeline.builder import BuildResult, build, output_kinds

__all__ = ["BuildResult", "build", "output_kinds"]
