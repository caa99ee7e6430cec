"""gammatrace benchmark suite: workloads, plain baselines, report (``python -m benches.report``)."""
