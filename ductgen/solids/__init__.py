"""Solids: the only package that imports the CAD kernel (cadquery / OCP)."""
