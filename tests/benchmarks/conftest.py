"""The benchmarks are scripts (python tests/benchmarks/bench_timeconstants.py), not tests."""

collect_ignore_glob = ["*.py"]
