"""Inputs layer: material data files, quantities with units (later: calculation files)."""
