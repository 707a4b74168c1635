"""Data and peers for the profile benchmark (tests/bench/profile.rs).

  make-parquet PATH ROWS   a Parquet file of ROWS rows and 15 mixed columns
                           (ints, floats, decimal, strings of moderate and
                           high cardinality, nullable text, timestamp, date,
                           bool, a list, a struct), pyarrow's defaults
                           (snappy, dictionary pages, 1 Mi-row row groups)
  make-jsonl PATH ROWS     the same rows as JSON Lines
  make-parts DIR PARTS ROWS  a directory of PARTS Parquet part files of ROWS
                           rows each, in Hive-style `week=N` partitions
  read-table PATH          median seconds of pyarrow.parquet.read_table (3 runs)
  polars-parquet PATH      median seconds of polars read_parquet + statistics
  polars-ndjson PATH       seconds of polars read_ndjson + statistics (1 run)

The statistics polars computes, for every leaf (struct fields, list lengths
and list elements): null count, n_unique, min, max, and for numbers,
decimals and temporals (as their physical integers) mean, std and the seven
quantiles p1 p5 p25 p50 p75 p95 p99 with linear interpolation — the same
set Plumbline reports. Each timing prints one number (seconds) on stdout.
"""

import json
import sys

from peers import median_seconds  # same folder: the script's own path is on sys.path

CHUNK = 1 << 20
QUANTILES = [0.01, 0.05, 0.25, 0.5, 0.75, 0.95, 0.99]
CATEGORIES = [f"category-{i:02d}" for i in range(50)]
CITIES = [f"town-{i:04d}" for i in range(5000)]
NOTES = [f"note number {i}" for i in range(200)]
TAGS = [f"tag{i}" for i in range(20)]


def chunk_table(rng, start, n):
    import numpy as np
    import pyarrow as pa

    def with_nulls(values, share):
        mask = rng.random(n) < share
        return pa.array(values, mask=mask)

    lengths = rng.integers(0, 4, n)
    offsets = np.concatenate([[0], np.cumsum(lengths)]).astype(np.int32)
    tag_values = pa.array(np.array(TAGS)[rng.integers(0, len(TAGS), int(offsets[-1]))])
    created = rng.integers(1_672_531_200_000_000, 1_735_689_600_000_000, n)  # 2023-01-01 .. 2025-01-01, µs
    cents = rng.integers(0, 10_000_000, n)
    return pa.table(
        {
            "id": pa.array(np.arange(start, start + n, dtype=np.int64)),
            "customer": pa.array(rng.integers(0, 200_000, n).astype(np.int32)),
            "quantity": pa.array(rng.integers(1, 50, n).astype(np.int16)),
            "amount": with_nulls(rng.lognormal(3, 1, n), 0.05),
            "score": pa.array(rng.standard_normal(n).astype(np.float32)),
            "price": pa.array(cents, pa.int64()).cast(pa.decimal128(19, 0)).view(pa.decimal128(12, 2)),
            "category": pa.array(np.array(CATEGORIES)[rng.integers(0, len(CATEGORIES), n)]),
            "city": pa.array(np.array(CITIES)[rng.integers(0, len(CITIES), n)]),
            "code": pa.array(np.char.add("C", rng.integers(0, 2_000_000, n).astype(str))),
            "note": with_nulls(np.array(NOTES)[rng.integers(0, len(NOTES), n)], 0.3),
            "created": pa.array(created, pa.timestamp("us", tz="UTC")),
            "day": pa.array((created // 86_400_000_000).astype(np.int32), pa.date32()),
            "active": with_nulls(rng.random(n) < 0.7, 0.01),
            "tags": pa.ListArray.from_arrays(pa.array(offsets), tag_values),
            "location": pa.StructArray.from_arrays(
                [pa.array(rng.uniform(-90, 90, n)), pa.array(rng.uniform(-180, 180, n))], names=["lat", "lon"]
            ),
        }
    )


def chunks(rows):
    import numpy as np

    rng = np.random.default_rng(42)
    for start in range(0, rows, CHUNK):
        yield chunk_table(rng, start, min(CHUNK, rows - start))


def make_parquet(path, rows):
    import pyarrow.parquet as pq

    writer = None
    for table in chunks(rows):
        if writer is None:
            writer = pq.ParquetWriter(path, table.schema)
        writer.write_table(table, row_group_size=CHUNK)
    writer.close()


def make_jsonl(path, rows):
    with open(path, "w") as out:
        for table in chunks(rows):
            for row in table.to_pylist():
                row["price"] = str(row["price"])
                row["created"] = row["created"].strftime("%Y-%m-%dT%H:%M:%S.%fZ")
                row["day"] = row["day"].isoformat()
                out.write(json.dumps(row, separators=(",", ":")))
                out.write("\n")


def make_parts(directory, parts, rows):
    import os

    import numpy as np
    import pyarrow.parquet as pq

    rng = np.random.default_rng(7)
    for part in range(parts):
        folder = os.path.join(directory, f"week={part % 52}")
        os.makedirs(folder, exist_ok=True)
        table = chunk_table(rng, part * rows, rows)
        pq.write_table(table, os.path.join(folder, f"part-{part:05d}.parquet"))


def leaf_exprs(schema):
    """(name, expression, numeric) for every leaf Plumbline profiles."""
    import polars as pl

    leaves = []
    for name, dtype in schema.items():
        col = pl.col(name)
        if isinstance(dtype, pl.Struct):
            for f in dtype.fields:
                leaves.append((f"{name}.{f.name}", col.struct.field(f.name), f.dtype.is_numeric()))
        elif isinstance(dtype, pl.List):
            leaves.append((f"{name}.len", col.list.len(), True))
        else:
            leaves.append((name, col, dtype.is_numeric() or dtype.is_temporal() or dtype.is_decimal()))
    return leaves


def stat_exprs(label, expr, numeric):
    exprs = [
        expr.null_count().alias(f"{label}:nulls"),
        expr.n_unique().alias(f"{label}:distinct"),
        expr.min().alias(f"{label}:min"),
        expr.max().alias(f"{label}:max"),
    ]
    if numeric:
        x = expr.to_physical().cast(__import__("polars").Float64)
        exprs += [x.mean().alias(f"{label}:mean"), x.std().alias(f"{label}:std")]
        exprs += [x.quantile(q, interpolation="linear").alias(f"{label}:q{q}") for q in QUANTILES]
    return exprs


def polars_profile(df):
    import polars as pl

    exprs = []
    for label, expr, numeric in leaf_exprs(df.schema):
        exprs += stat_exprs(label, expr, numeric)
    out = [df.select(exprs)]
    for name, dtype in df.schema.items():
        if isinstance(dtype, pl.List):
            elements = df.select(pl.col(name).explode())
            out.append(elements.select(stat_exprs(f"{name}[]", pl.col(name), dtype.inner.is_numeric())))
    return out


def main():
    command, path = sys.argv[1], sys.argv[2]
    if command == "make-parquet":
        make_parquet(path, int(sys.argv[3]))
    elif command == "make-jsonl":
        make_jsonl(path, int(sys.argv[3]))
    elif command == "make-parts":
        make_parts(path, int(sys.argv[3]), int(sys.argv[4]))
    elif command == "read-table":
        import pyarrow.parquet as pq

        print(median_seconds(lambda: pq.read_table(path), 3))
    elif command == "polars-parquet":
        import polars as pl

        print(median_seconds(lambda: polars_profile(pl.read_parquet(path)), 3))
    elif command == "polars-ndjson":
        import polars as pl

        print(median_seconds(lambda: polars_profile(pl.read_ndjson(path)), 1))
    else:
        sys.exit(f"unknown command {command}")


if __name__ == "__main__":
    main()
