"""Reference files for tests/reference_pyarrow.rs, written by pyarrow.

Writes Parquet and Arrow IPC files with types that readers get wrong, and,
beside them, pyarrow's own view of each file: schema (pyarrow's type
spelling), row count, null count per top-level column, and for integer
columns the smallest and largest value (pyarrow.compute.min_max).

Usage: python3 tricky_types.py OUT_DIR
"""

import json
import sys
from decimal import Decimal
from pathlib import Path

import pyarrow as pa
import pyarrow.compute as pc
import pyarrow.ipc as ipc
import pyarrow.parquet as pq


def tricky_table(rows):
    n = rows
    words = ["alpha", "beta", None, "gamma"]
    item = pa.struct([("a", pa.int32()), ("b", pa.string())])
    nested_type = pa.map_(pa.string(), pa.list_(item))
    nested = []
    for i in range(n):
        if i % 7 == 3:
            nested.append(None)
        else:
            nested.append([(f"k{i % 3}", [{"a": i, "b": None if i % 2 else f"v{i}"}] * (i % 3))])
    columns = {
        "dict_str": pa.array([words[i % 4] for i in range(n)], pa.string()).dictionary_encode(),
        "dec": pa.array(
            [None if i % 5 == 0 else Decimal(f"-{i % 10}123456789012345678901234567.0123456789") for i in range(n)],
            pa.decimal128(38, 10),
        ),
        "ts_ns_tz": pa.array([None if i % 4 == 1 else 1_700_000_000_000_000_000 + i for i in range(n)], pa.timestamp("ns", tz="Europe/Paris")),
        "large_str": pa.array([None if i % 6 == 0 else "x" * (i % 50) for i in range(n)], pa.large_string()),
        "fsb": pa.array([None if i % 3 == 0 else bytes([i % 256]) * 16 for i in range(n)], pa.binary(16)),
        "u64": pa.array([2**64 - 1 if i % 2 else i for i in range(n)], pa.uint64()),
        "nested": pa.array(nested, nested_type),
        "all_null_int": pa.array([None] * n, pa.int64()),
        "null_type": pa.nulls(n),
    }
    return pa.table(columns)


def wide_table(columns, rows):
    return pa.table({f"c{j:04d}": pa.array([None if (i + j) % 9 == 0 else i * j for i in range(rows)], pa.int32()) for j in range(columns)})


def view(table):
    fields = []
    for name, column in zip(table.column_names, table.columns):
        entry = {"name": name, "type": str(column.type), "nulls": column.null_count}
        if pa.types.is_integer(column.type) and column.null_count < len(column):
            mm = pc.min_max(column)
            entry["min"] = mm["min"].as_py()
            entry["max"] = mm["max"].as_py()
        fields.append(entry)
    return {"rows": table.num_rows, "fields": fields}


def main():
    out = Path(sys.argv[1])
    out.mkdir(parents=True, exist_ok=True)
    expected = {}
    tables = {
        "tricky": tricky_table(500),
        "zero_rows": tricky_table(0),
        "wide": wide_table(2000, 40),
    }
    for name, table in tables.items():
        pq.write_table(table, out / f"{name}.parquet", row_group_size=200)
        with ipc.new_file(out / f"{name}.arrow", table.schema) as writer:
            writer.write_table(table, max_chunksize=200)
        # pyarrow's view of what it reads back, not of what it meant to write.
        expected[f"{name}.parquet"] = view(pq.read_table(out / f"{name}.parquet"))
        expected[f"{name}.arrow"] = view(ipc.open_file(out / f"{name}.arrow").read_all())
    (out / "expected.json").write_text(json.dumps(expected, indent=1))
    print(f"pyarrow {pa.__version__}: wrote {len(expected)} files to {out}")


if __name__ == "__main__":
    main()
