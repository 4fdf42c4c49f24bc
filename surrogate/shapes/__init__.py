"""Parametric antenna shapes -> occupied sites of a cubic dipole lattice (no physics)."""
