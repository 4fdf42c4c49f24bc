"""Multi-objective search of the surrogates: Pareto filter, hypervolume."""

from ._pareto import hypervolume, pareto_mask

__all__ = ["pareto_mask", "hypervolume"]
