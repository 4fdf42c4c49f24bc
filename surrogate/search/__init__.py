"""Multi-objective search of the surrogates: objectives, optuna study, Pareto front, trust flags, robustness.

* :mod:`._pareto`      non-dominated filter and hypervolume (minimisation)
* :mod:`._objectives`  objectives (mean or cautious) and constraints on the surrogate predictions
* :mod:`._study`       batched ask / evaluate / tell driver, seeded samplers (NSGA-II, TPE, GP)
* :mod:`._archive`     the study file beside the store (optuna journal or SQLite)
* :mod:`._robust`      Monte Carlo under a length tolerance
* :mod:`._flags`       trust flags with reasons
* :mod:`._search`      one search of a store, recorded in the store
"""

from ._archive import STUDY_FORMATS, StudyArchive, study_file
from ._errors import EmptyFrontError, StaleModelWarning
from ._flags import FLAGS, TrustSettings, nearest_distances, trust_flags, typical_spacing
from ._objectives import (
    DEFAULT_OBJECTIVES,
    DEFAULT_WINDOW_NM,
    KNOWN_DIRECTIONS,
    Objective,
    SurrogateProblem,
    parse_objectives,
)
from ._pareto import hypervolume, pareto_mask
from ._robust import DEFAULT_LENGTH_SIGMA_NM, DEFAULT_MC_SAMPLES, ROBUSTNESS_COLUMNS, length_parameters, robustness
from ._search import DEFAULT_TRIALS, SearchOutcome, front_of, search_store, training_reference
from ._study import DEFAULT_POPULATION_SIZE, SAMPLERS, StudyResult, make_sampler, run_study

__all__ = [
    "pareto_mask",
    "hypervolume",
    "Objective",
    "DEFAULT_OBJECTIVES",
    "KNOWN_DIRECTIONS",
    "DEFAULT_WINDOW_NM",
    "parse_objectives",
    "SurrogateProblem",
    "SAMPLERS",
    "DEFAULT_POPULATION_SIZE",
    "StudyResult",
    "make_sampler",
    "run_study",
    "STUDY_FORMATS",
    "StudyArchive",
    "study_file",
    "DEFAULT_LENGTH_SIGMA_NM",
    "DEFAULT_MC_SAMPLES",
    "ROBUSTNESS_COLUMNS",
    "length_parameters",
    "robustness",
    "FLAGS",
    "TrustSettings",
    "nearest_distances",
    "typical_spacing",
    "trust_flags",
    "DEFAULT_TRIALS",
    "SearchOutcome",
    "search_store",
    "training_reference",
    "front_of",
    "EmptyFrontError",
    "StaleModelWarning",
]
