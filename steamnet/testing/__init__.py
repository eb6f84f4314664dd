"""Tools for testing steamnet and checking its results.

:mod:`steamnet.testing.synth`
    seeded random plant models, for property tests, fuzzing and benchmarks (synthetic
    test data, no real plant).
"""
