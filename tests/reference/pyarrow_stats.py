"""Reference statistics from pyarrow.compute for tests/reference_stats.rs.

Writes Parquet files of generated columns and, per column, pyarrow.compute's
null_count, count_distinct, min_max, mean, stddev (ddof=1) and quantile
(linear interpolation) at p1..p99 and at p ∓ 0.01 (to judge a sketch's rank
error); value_counts for strings and integers; utf8_length for strings.

Usage: python3 pyarrow_stats.py OUT_DIR
"""

import json
import sys
from decimal import Decimal
from pathlib import Path

import numpy as np
import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.parquet as pq

PROBABILITIES = [0.01, 0.05, 0.25, 0.50, 0.75, 0.95, 0.99]


def table(rows, seed):
    rng = np.random.default_rng(seed)
    mask = rng.random(rows) < 0.1
    ids = rng.integers(-10**12, 10**12, rows)
    words = np.array([f"w{i}" for i in range(30)])
    return pa.table(
        {
            "id": pa.array(ids, mask=mask),
            "measure": pa.array(rng.normal(100.0, 15.0, rows)),
            "small": pa.array(rng.integers(0, 50, rows).astype(np.int32)),
            "word": pa.array(words[rng.integers(0, 30, rows)], mask=rng.random(rows) < 0.05),
            "price": pa.array([Decimal(int(c)) / 100 for c in rng.integers(0, 10**7, rows)], pa.decimal128(10, 2)),
        }
    )


def quantiles(column, ps):
    ps = [min(1.0, max(0.0, p)) for p in ps]
    return pc.quantile(column, q=ps, interpolation="linear").to_pylist()


def view(t):
    fields = {}
    for name, column in zip(t.column_names, t.columns):
        entry = {"nulls": column.null_count, "distinct": pc.count_distinct(column, mode="only_valid").as_py()}
        if pa.types.is_integer(column.type) or pa.types.is_floating(column.type) or pa.types.is_decimal(column.type):
            numbers = pc.cast(column, pa.float64())
            mm = pc.min_max(numbers)
            entry.update(
                min=mm["min"].as_py(),
                max=mm["max"].as_py(),
                mean=pc.mean(numbers).as_py(),
                std=pc.stddev(numbers, ddof=1).as_py(),
                quantiles=quantiles(numbers, PROBABILITIES),
                below=quantiles(numbers, [p - 0.01 for p in PROBABILITIES]),
                above=quantiles(numbers, [p + 0.01 for p in PROBABILITIES]),
            )
        if pa.types.is_string(column.type) or pa.types.is_integer(column.type):
            counts = pc.value_counts(column.drop_null()).to_pylist()
            entry["value_counts"] = {str(c["values"]): c["counts"] for c in counts}
        if pa.types.is_string(column.type):
            lengths = pc.utf8_length(column)
            mm = pc.min_max(lengths)
            entry["lengths"] = {"min": mm["min"].as_py(), "max": mm["max"].as_py(), "mean": pc.mean(lengths).as_py()}
        fields[name] = entry
    return fields


def main():
    out = Path(sys.argv[1])
    out.mkdir(parents=True, exist_ok=True)
    expected = {}
    for name, rows, seed in [("small", 5_000, 1), ("large", 300_000, 2)]:
        t = table(rows, seed)
        pq.write_table(t, out / f"{name}.parquet", row_group_size=50_000)
        expected[f"{name}.parquet"] = {"rows": rows, "fields": view(pq.read_table(out / f"{name}.parquet"))}
    (out / "expected.json").write_text(json.dumps(expected))


if __name__ == "__main__":
    main()
