"""Result objects of the skyclock Python module.

Each result holds the library's typed result in its JSON form (``to_dict()``) and the
tables as pandas DataFrames; keys of the result are also readable as attributes.
"""

from __future__ import annotations

import copy
import json
from typing import Any, Dict, Mapping

import numpy as np
import pandas as pd

__all__ = ["Result", "frame"]

# Integer columns that are missing for some rows (skipped sources) become pandas' nullable
# integers, so that a missing count is <NA> rather than a float NaN.
_NULLABLE_INTEGER_COLUMNS = {"points", "rows_dropped_nan"}


def frame(columns: Mapping[str, Any]) -> pd.DataFrame:
    """A DataFrame from the columns the native module returns (numpy arrays or lists)."""
    data = {}
    for name, values in columns.items():
        if isinstance(values, np.ndarray):
            data[name] = values
        elif name in _NULLABLE_INTEGER_COLUMNS:
            data[name] = pd.array(values, dtype="Int64")
        else:
            data[name] = pd.array(values, dtype=object)
    return pd.DataFrame(data)


class Result:
    """A typed library result: ``to_dict()`` gives its fields (as the command line's
    ``--json`` prints them, without the provenance envelope); tables are DataFrames.

    Attributes are the result's top-level fields (``result.peaks``…) and its tables
    (listed in ``tables``).
    """

    def __init__(self, kind: str, data_json: str, tables: Dict[str, pd.DataFrame] | None = None, **extra: Any):
        self._kind = kind
        self._data = json.loads(data_json)
        self._tables = dict(tables or {})
        self._extra = extra

    @property
    def kind(self) -> str:
        """What this result is (e.g. ``"PeriodSearchReport"``)."""
        return self._kind

    @property
    def tables(self) -> list:
        """Names of the tables this result carries."""
        return list(self._tables)

    def to_dict(self) -> dict:
        """The result's fields as plain Python values (a deep copy)."""
        return copy.deepcopy(self._data)

    def __getattr__(self, name: str) -> Any:
        if name.startswith("_"):
            raise AttributeError(name)
        if name in self._tables:
            return self._tables[name]
        if name in self._extra:
            return self._extra[name]
        if name in self._data:
            return copy.deepcopy(self._data[name])
        raise AttributeError(f"{self._kind} has no field or table '{name}'; fields: {', '.join(self._data)}")

    def __dir__(self):
        return sorted(set(super().__dir__()) | set(self._data) | set(self._tables) | set(self._extra))

    def __repr__(self) -> str:
        tables = ", ".join(f"{k}: {len(v)} rows" for k, v in self._tables.items())
        return f"<skyclock {self._kind}: fields {', '.join(self._data)}{'; tables ' + tables if tables else ''}>"
