"""Benchmark: survey curves per second through the Dask path with 1 and 2 worker
processes (one thread each, RAYON_NUM_THREADS=1), and the single-process batch for
reference, on the same invented field in the same session. Reported as ratios against the
one-worker run (docs/benchmarks.md); the absolute rates depend on the machine.

    .venv/bin/python python/benchmarks/dask_survey.py [--sources 3000]
"""

import argparse
import os
import sys
import tempfile
import time
from pathlib import Path

import pandas as pd

sys.path.insert(0, str(Path(__file__).resolve().parents[1] / "tests"))
from invented_field import invented_field  # noqa: E402

import skyclock  # noqa: E402
from skyclock.distributed import local_cluster, survey_batch_on_dask  # noqa: E402

KEYWORDS = dict(time_column="time", value_column="mag", error_column="mag_err", method="sinusoid", max_freq_per_day=10.0,
                peaks=3)


def main():
    p = argparse.ArgumentParser()
    p.add_argument("--sources", type=int, default=3000)
    a = p.parse_args()
    folder = Path(tempfile.mkdtemp(prefix="skyclock-bench-"))
    os.environ.setdefault("DASK_TEMPORARY_DIRECTORY", str(folder / "dask"))
    path = folder / "field.parquet"
    invented_field(sources=a.sources, seed=99).to_parquet(path, row_group_size=20_000)
    n = a.sources + 1
    rates = {}
    started = time.perf_counter()
    single = skyclock.survey_batch(pd.read_parquet(path), table_name=str(path), **KEYWORDS)
    rates["single process (all cores)"] = n / (time.perf_counter() - started)
    startup = {}
    for workers in (1, 2):
        # The cluster's start-up (seconds, once per session) is timed apart from the batch.
        started = time.perf_counter()
        cluster = local_cluster(workers)
        startup[workers] = time.perf_counter() - started
        try:
            started = time.perf_counter()
            sources, _ = survey_batch_on_dask(path, scheduler_address=cluster.scheduler_address,
                                              partitions=4 * workers, **KEYWORDS)
            rates[f"Dask, {workers} worker(s)"] = n / (time.perf_counter() - started)
        finally:
            cluster.close()
        pd.testing.assert_frame_equal(sources, single.sources, check_exact=True)
    reference = rates["Dask, 1 worker(s)"]
    print(f"{n} invented light curves, {os.cpu_count()} CPUs, load average {os.getloadavg()[0]:.1f}")
    print("  cluster start-up: " + ", ".join(f"{w} worker(s) {s:.1f} s" for w, s in startup.items()))
    for name, rate in rates.items():
        print(f"  {name:<28} {rate:8.1f} curves/s   ratio to 1 worker {rate / reference:5.2f}")


if __name__ == "__main__":
    main()
