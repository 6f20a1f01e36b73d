"""The benchmark folder holds a script, not tests."""

collect_ignore = ["run_benchmark.py", "run_study_benchmark.py", "run_scaling.py"]
