"""Peers and data for the benchmarks in tests/bench/shape.rs.

  make-parquet PATH   a Parquet file of at least 1 GB (int64/float64/string
                      columns, uncompressed, 128k-row row groups)
  make-jsonl PATH     a JSON Lines file of about 500 MB with nested fields
  footer PATH         median seconds of pyarrow.parquet.read_metadata (20 runs)
  ndjson PATH         median seconds of polars.read_ndjson (3 runs)

Each timing prints one number (seconds) on stdout.
"""

import json
import random
import statistics
import sys
import time


def make_parquet(path):
    import numpy as np
    import pyarrow as pa
    import pyarrow.parquet as pq

    rows_per_group = 128 * 1024
    groups = 110  # 110 groups x 128k rows x ~76 bytes ≈ 1.1 GB
    rng = np.random.default_rng(7)
    schema = pa.schema(
        [(f"i{j}", pa.int64()) for j in range(6)] + [(f"f{j}", pa.float64()) for j in range(3)] + [("s", pa.string())]
    )
    with pq.ParquetWriter(path, schema, compression="none", use_dictionary=False) as writer:
        for _ in range(groups):
            cols = [pa.array(rng.integers(-(2**62), 2**62, rows_per_group)) for _ in range(6)]
            cols += [pa.array(rng.standard_normal(rows_per_group)) for _ in range(3)]
            cols.append(pa.array(rng.integers(0, 10**6, rows_per_group).astype(str)))
            writer.write_table(pa.table(cols, schema=schema), row_group_size=rows_per_group)


def make_jsonl(path, target_bytes=500 * 1024 * 1024):
    rnd = random.Random(11)
    zones = ["north", "south", "east", "west", "centre"]
    written = 0
    with open(path, "w") as out:
        i = 0
        while written < target_bytes:
            row = {
                "id": i,
                "at": f"2026-0{1 + i % 9}-1{i % 10}T0{i % 10}:15:00Z",
                "pickup": {"zone": rnd.choice(zones), "lat": rnd.random() * 90, "lon": rnd.random() * 180},
                "stops": [{"seq": s, "eta": "2026-03-02T06:12:19Z"} for s in range(i % 4)],
                "price": round(rnd.random() * 100, 2),
                "note": None if i % 3 else "leave at door",
                "tags": ["a", "b"][: i % 3],
            }
            if i % 5:
                row["rating"] = i % 5
            line = json.dumps(row) + "\n"
            out.write(line)
            written += len(line)
            i += 1


def median_seconds(fn, runs):
    times = []
    for _ in range(runs):
        t0 = time.perf_counter()
        fn()
        times.append(time.perf_counter() - t0)
    return statistics.median(times)


def main():
    command, path = sys.argv[1], sys.argv[2]
    if command == "make-parquet":
        make_parquet(path)
    elif command == "make-jsonl":
        make_jsonl(path)
    elif command == "footer":
        import pyarrow.parquet as pq

        print(median_seconds(lambda: pq.read_metadata(path), 20))
    elif command == "ndjson":
        import polars as pl

        print(median_seconds(lambda: pl.read_ndjson(path), 3))
    else:
        sys.exit(f"unknown command {command}")


if __name__ == "__main__":
    main()
