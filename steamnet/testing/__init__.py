"""Tools for testing steamnet and checking its results.

:mod:`steamnet.testing.synth`
    seeded random plant models, for property tests, fuzzing and benchmarks (synthetic
    test data, no real plant).
:mod:`steamnet.testing.consistency`
    :func:`check_case` and :func:`check_study`: every balance of a solved case
    recomputed from its result tables, independently of the solver (see
    docs/results.md, "Checking results yourself").
"""

from .consistency import check_case, check_study

__all__ = ["check_case", "check_study"]
