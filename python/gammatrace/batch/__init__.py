"""Many structures at once, above the analysis layer: the batch table (:mod:`.run`), screening
files into JSON Lines / CSV / Parquet (:mod:`.screen`) and Dask runs (:mod:`.distributed`)."""

from __future__ import annotations

from .run import (
    COLUMNS,
    DEFAULT_CHUNK,
    Ragged,
    analyze_batch,
    convert,
    iter_batch,
    ragged_from_file,
    ragged_from_structures,
    to_dataframe,
)

__all__ = [
    "COLUMNS",
    "DEFAULT_CHUNK",
    "Ragged",
    "analyze_batch",
    "convert",
    "iter_batch",
    "ragged_from_file",
    "ragged_from_structures",
    "to_dataframe",
]
