"""gammatrace benchmark suite: workloads, plain baselines and the report (``python -m benches.report``)."""
