"""Gravitational potentials (positive convention: U = +GM/r for a point mass)."""
