"""Benchmarks of pinlib, run with ``make bench`` (``python -m tests.bench``).

They are kept out of the unit-test run on purpose: pytest collects ``test_*.py`` and
these modules are named ``bench_*.py``, and no test asserts a time.  Each benchmark
prints one line with the median of repeated runs, a baseline measured in the same run,
their ratio, and the target with ``pass`` or ``miss``.
"""
