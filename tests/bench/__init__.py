"""Benchmarks of pinlib, run with ``make bench`` (``python -m tests.bench``).

They are kept out of the unit-test run on purpose: pytest collects ``test_*.py`` and
these modules are named ``bench_*.py``, and no test asserts a time.  Each benchmark
prints one line with the median of repeated runs, then either its baseline (what it is,
and its value, measured in the same run unless the line says otherwise) and the speed
against it ("3.2x faster than the baseline": the ratio is above 1 when faster), or "no
baseline:" and why; then the target with ``pass`` or ``MISS`` (see
:class:`tests.bench.common.Result`).
"""
