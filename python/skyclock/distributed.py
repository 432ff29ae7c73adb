"""Survey batches on a Dask cluster.

``survey_batch_on_dask`` reads a Parquet survey table with dask.dataframe, numbers its rows
as the file does (1, 2, … across all row groups), brings every source's rows into one
partition (a shuffle on the source column), runs the Rust batch
(``skyclock.survey_batch``) on each partition on the cluster's workers, and returns one
row per source in the order of the sources' first rows — the same table a single process
gives. With the cascade (the default method), each partition flags its sources against
its own count of sources; once the partitions are gathered, the flags are carried to the
whole field's count (library ``survey::cascade_table::flags_in_larger_field``), so the
variability flag's false-alarm level counts every source searched, as in one process. A LocalCluster is started by default; give ``scheduler_address`` for a running
cluster (``dask scheduler`` / ``dask worker``, docs/dask.md).
"""

from __future__ import annotations

import os
import tempfile
from typing import Optional

import pandas as pd

from . import _native, survey_batch

__all__ = ["survey_batch_on_dask", "local_cluster"]

_ROW = "__skyclock_row__"


def local_cluster(n_workers: int = 2, temporary_directory: Optional[str] = None):
    """A LocalCluster of ``n_workers`` worker processes with one thread each; the Rust
    batch in each worker runs on one thread (RAYON_NUM_THREADS=1), so workers do not
    oversubscribe the cores. Dask's spill files go to ``temporary_directory`` (default: a
    new temporary folder, also exported as DASK_TEMPORARY_DIRECTORY)."""
    from dask.distributed import LocalCluster

    folder = temporary_directory or os.environ.get("DASK_TEMPORARY_DIRECTORY") or tempfile.mkdtemp(prefix="skyclock-dask-")
    os.environ.setdefault("DASK_TEMPORARY_DIRECTORY", folder)
    return LocalCluster(
        n_workers=n_workers,
        threads_per_worker=1,
        processes=True,
        local_directory=folder,
        dashboard_address=None,
        env={"RAYON_NUM_THREADS": "1", "DASK_TEMPORARY_DIRECTORY": folder},
    )


def _number_rows(partition: pd.DataFrame, offsets, partition_info=None) -> pd.DataFrame:
    start = offsets[partition_info["number"]] if partition_info else 0
    out = partition.copy()
    out[_ROW] = range(start + 1, start + 1 + len(partition))
    return out


def _batch_partition(partition: pd.DataFrame, source_column: str, keywords: dict):
    """The Rust batch on one partition (all rows of each of its sources), rows in file order."""
    partition = partition.sort_values(_ROW, kind="stable")
    result = survey_batch(partition, source_column=source_column, row_numbers=partition[_ROW].to_numpy(), **keywords)
    return result.sources, result.to_dict()


def _carry_flags_to_field(sources: pd.DataFrame, n_sources: int, level: float) -> pd.DataFrame:
    """The cascade's ``class``, ``variable`` and ``field_false_alarm_probability`` of rows
    made per partition, carried to the whole field of ``n_sources`` (the library decides)."""
    def cell(v):
        return None if v is None or (isinstance(v, float) and v != v) or v is pd.NA else v

    classes = [cell(v) for v in sources["class"].tolist()]
    source_fap = [None if cell(v) is None else float(v) for v in sources["source_false_alarm_probability"].tolist()]
    classes, variable, field = _native.cascade_flags_in_field(classes, source_fap, int(n_sources), float(level))
    out = sources.copy()
    out["class"] = pd.Series(classes, index=out.index, dtype=sources["class"].dtype)
    out["variable"] = pd.Series(variable, index=out.index, dtype=sources["variable"].dtype)
    out["field_false_alarm_probability"] = pd.Series(
        [float("nan") if v is None else v for v in field], index=out.index, dtype=sources["field_false_alarm_probability"].dtype
    )
    return out


def survey_batch_on_dask(
    path,
    *,
    scheduler_address: Optional[str] = None,
    n_workers: int = 2,
    partitions: Optional[int] = None,
    source_column: str = "source",
    **keywords,
):
    """Runs the survey batch over the Parquet table at ``path`` on a Dask cluster.

    ``keywords`` are those of ``skyclock.survey_batch`` (columns, clock, search options,
    place); ``partitions`` sets how many pieces the sources are spread over (default: the
    table's partitions, at least two per worker). Messages name ``path`` and the file's
    rows, as the command line and ``survey_batch`` on the whole table do.

    Returns ``(sources, summary)``: the per-source DataFrame sorted by ``first_row`` and the
    summed counts (``sources``, ``searched``, ``skipped``, ``rows``) with ``times``, the
    first skipped sources' messages and, with the cascade, ``class_counts`` in the whole
    field. The cascade's ``class``, ``variable`` and ``field_false_alarm_probability`` count
    every source of the table, not those of one partition.
    """
    import dask
    import dask.dataframe as dd
    from dask.distributed import Client

    keywords.setdefault("table_name", os.fspath(path))
    cluster = None
    if scheduler_address is None:
        cluster = local_cluster(n_workers)
        client = Client(cluster)
    else:
        client = Client(scheduler_address)
    try:
        table = dd.read_parquet(os.fspath(path))
        lengths = table.map_partitions(len).compute().tolist()
        offsets = [sum(lengths[:k]) for k in range(len(lengths))]
        numbered = table.map_partitions(_number_rows, offsets, meta={**table.dtypes.to_dict(), _ROW: "int64"})
        workers = max(1, len(client.scheduler_info().get("workers", {})) or n_workers)
        n = partitions or max(table.npartitions, 2 * workers)
        grouped = numbered.shuffle(on=source_column, npartitions=n)
        tasks = [dask.delayed(_batch_partition)(p, source_column, keywords) for p in grouped.to_delayed()]
        parts = client.compute(tasks, sync=True)
    finally:
        client.close()
        if cluster is not None:
            cluster.close()
    frames = [f for f, _ in parts if len(f)]
    sources = pd.concat(frames, ignore_index=True) if frames else parts[0][0]
    sources = sources.sort_values("first_row", kind="stable").reset_index(drop=True)
    summaries = [s for _, s in parts]
    summary = {k: sum(s[k] for s in summaries) for k in ("sources", "searched", "skipped", "rows")}
    if "source_false_alarm_probability" in sources.columns:
        sources = _carry_flags_to_field(sources, summary["sources"], keywords.get("false_alarm_level", 0.01))
        searched = sources[sources["status"] == "searched"]
        summary["class_counts"] = {str(k): int(v) for k, v in sorted(searched["class"].value_counts().items())}
    summary["times"] = summaries[0]["times"] if summaries else ""
    skipped = sources[sources["status"] == "skipped"]["message"].tolist()
    summary["first_skipped"] = skipped[:5]
    return sources, summary
