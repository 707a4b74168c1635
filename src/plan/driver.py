#!/usr/bin/env python3
"""Plumbline lake plan driver.

Runs the Spark SQL script written beside this file over the source and
writes the result as a Plumbline report (the same JSON as
`plumbline profile --json`, with "engine": "spark" and the approximation
errors stated). Open the report in Plumbline, or pass it to
`plumbline compare` and `plumbline fit`.

    spark-submit profile.py --report profile.report.json
    python3 profile.py --report profile.report.json --master 'local[*]'

The report can hold data values (minimum, maximum, top values): keep it
where the data may be kept, or pass --no-examples.
"""

import argparse
import datetime
import json
import math
import os
import re
import sys

# Written by `plumbline plan`: the fields, their scopes and how to read the source.
PLAN = json.loads(@PLAN_JSON@)

REPORT_VERSION = 1
STATEMENT = re.compile(r"^-- @statement (summary|histogram|top) (\d+)\s*$", re.M)


def statements(script):
    """(kind, id, sql) for each marked statement, in order."""
    marks = list(STATEMENT.finditer(script))
    for i, m in enumerate(marks):
        end = marks[i + 1].start() if i + 1 < len(marks) else len(script)
        sql = script[m.end():end].strip().rstrip(";")
        yield m.group(1), int(m.group(2)), sql


def auto_edges(lo, hi, q1, q3, n, integers):
    """numpy's `auto` bins from a summary (numpy 2, as the local profile)."""
    if lo == hi:
        return [lo - 0.5, hi + 0.5]
    span = hi - lo
    sturges = span / (math.log2(n) + 1.0)
    fd = 2.0 * (q3 - q1) / n ** (1.0 / 3.0)
    width = min(max(fd, span / math.sqrt(n) / 2.0), sturges)
    if integers and width < 1.0:
        width = 1.0
    bins = max(int(math.ceil(span / width)), 1)
    return [lo + span * i / bins for i in range(bins + 1)]


def number(v):
    """Spark's Decimal and int results as JSON numbers."""
    if v is None:
        return None
    if isinstance(v, bool):
        return v
    if isinstance(v, int):
        return v
    f = float(v)
    if f.is_integer() and abs(f) < 2 ** 53 and not isinstance(v, float):
        return int(f)
    return f


def civil_from_days(z):
    """Days since 1970-01-01 to (year, month, day), proleptic Gregorian, any
    year (Howard Hinnant's civil_from_days, as Plumbline itself computes)."""
    z += 719468
    era = z // 146097
    doe = z - era * 146097
    yoe = (doe - doe // 1460 + doe // 36524 - doe // 146096) // 365
    doy = doe - (365 * yoe + yoe // 4 - yoe // 100)
    mp = (5 * doy + 2) // 153
    d = doy - (153 * mp + 2) // 5 + 1
    m = mp + 3 if mp < 10 else mp - 9
    return yoe + era * 400 + (m <= 2), m, d


def rfc3339(micros):
    """An instant to the second, UTC, as Plumbline writes it (Python's own
    dates stop at the year 9999; data does not)."""
    if micros is None:
        return None
    secs = micros // 1_000_000
    days, rem = secs // 86400, secs % 86400
    y, m, d = civil_from_days(days)
    return "%04d-%02d-%02dT%02d:%02d:%02dZ" % (y, m, d, rem // 3600, rem % 3600 // 60, rem % 60)


def size_and_parts(spark, source):
    """Bytes and data files under the source, as the engine's file system sees them."""
    try:
        jvm = spark.sparkContext._jvm
        path = jvm.org.apache.hadoop.fs.Path(source)
        fs = path.getFileSystem(spark.sparkContext._jsc.hadoopConfiguration())
        summary = fs.getContentSummary(path)
        return summary.getLength(), summary.getFileCount()
    except Exception:  # a file system that cannot say: the report says "unknown"
        return None, None


def run(spark, source, script, no_examples):
    reader = spark.read.format(PLAN["reader"])
    for key, value in PLAN["reader_options"]:
        reader = reader.option(key, value)
    if PLAN["schema_ddl"]:
        reader = reader.schema(PLAN["schema_ddl"])
    reader.load(source).createOrReplaceTempView(PLAN["view"])

    by_index = {f["index"]: f for f in PLAN["fields"]}
    summaries, histograms, tops, edges = {}, {}, {}, {}
    for kind, ident, sql in statements(script):
        if kind == "summary":
            # A wide scope is summarised by several statements, one row each.
            summaries.setdefault(ident, {}).update(spark.sql(sql).collect()[0].asDict())
        elif kind == "histogram":
            row = summaries[ident]
            args = {}
            for f in (f for f in PLAN["fields"] if f["scope"] == ident and f["measure"] in ("int", "float", "decimal")):
                p = "f%d_" % f["index"]
                if (":%slo" % p) not in sql:
                    continue  # another statement's field
                finite, q = row[p + "finite"], row[p + "quantiles"]
                if finite:
                    integers = f["measure"] == "int" or not row[p + "fractional"]
                    e = auto_edges(float(row[p + "min"]), float(row[p + "max"]), q[2], q[4], finite, integers)
                    edges[f["index"]] = e
                    width = (e[-1] - e[0]) / (len(e) - 1)
                    # Values so large that ±0.5 is lost to rounding: one bin.
                    if not width > 0 or not math.isfinite(width):
                        width = 1.0
                    args[p + "lo"], args[p + "width"], args[p + "last"] = e[0], width, len(e) - 2
                else:
                    args[p + "lo"], args[p + "width"], args[p + "last"] = 0.0, 1.0, 0
            for r in spark.sql(sql, args=args).collect():
                histograms.setdefault(r["field"], {})[r["bin"]] = r["count"]
        else:
            for r in spark.sql(sql).collect():
                tops.setdefault(r["field"], []).append({"value": r["value"], "count": r["count"]})
    for values in tops.values():
        values.sort(key=lambda v: (-v["count"], v["value"]))

    size, parts = size_and_parts(spark, source)
    fields = [entry(by_index[i], summaries[by_index[i]["scope"]], histograms, tops, edges, no_examples) for i in sorted(by_index)]
    return {
        "plumbline_report": REPORT_VERSION,
        "generated_at": datetime.datetime.now(datetime.timezone.utc).strftime("%Y-%m-%dT%H:%M:%SZ"),
        "engine": "spark",
        "engine_version": spark.version,
        "approximations": PLAN["limits"],
        "partial": False,
        "shape_only": False,
        "sampled": False,
        "examples_included": not no_examples,
        "source": {
            "path": source,
            "format": PLAN["format"],
            "compression": PLAN["compression"],
            "bytes": size,
            "rows": summaries[0]["scope_rows"],
            "parts": parts,
            "facts": {},
        },
        "fields": fields,
    }


def entry(f, row, histograms, tops, edges, no_examples):
    p = "f%d_" % f["index"]
    places, present = row[p + "places"], row[p + "present"]
    measure = f["measure"]
    kinds = {}
    if present:
        kinds[f["kind"]] = present
    if places - present:
        kinds["null"] = places - present
    e = {
        "path": f["path"],
        "name": f["name"],
        "depth": f["depth"],
        "role": f["role"],
        "declared_type": f["declared_type"],
        "observed": f["kind"] if present else "null",
        "kinds": kinds,
        "count": places,
        "nulls": places - present,
        "missing": 0,
        "examples": [],
    }
    if f["text_form"] and present:
        e["string_forms"] = {f["text_form"]: present}
    if f["declared_nullable"] is not None:
        e["declared_nullable"] = f["declared_nullable"]
    if measure in ("int", "float", "decimal", "text", "bool", "instant", "wall_time", "binary") and present:
        e["distinct"] = row[p + "distinct"]
        e["distinct_exact"] = False
        e["distinct_error"] = PLAN["distinct_rsd"]
    if measure in ("int", "float", "decimal") and row[p + "finite"]:
        q = row[p + "quantiles"]
        e["min"], e["max"] = number(row[p + "min"]), number(row[p + "max"])
        e["mean"], e["std"] = row[p + "mean"], row[p + "std"]
        e["quantiles"] = dict(zip(("p1", "p5", "p25", "p50", "p75", "p95", "p99"), q))
        e["quantiles_exact"] = False
        e["quantiles_rank_error"] = 1.0 / PLAN["quantile_accuracy"]
        bins = edges[f["index"]]
        counts = histograms.get(f["index"], {})
        e["histogram"] = {"edges": bins, "counts": [counts.get(i, 0) for i in range(len(bins) - 1)], "exact": True}
        if measure == "float":
            if row[p + "nan"]:
                e["nan"] = row[p + "nan"]
            if row[p + "infinite"]:
                e["infinite"] = row[p + "infinite"]
    if f["measure"] not in ("binary", "list", "map", "struct", "null") and present:
        e["top_exact"] = True
        if not no_examples:
            e["top"] = tops.get(f["index"], [])
    if measure == "text" and present:
        e["lengths"] = {"min": row[p + "length_min"], "mean": row[p + "length_mean"], "max": row[p + "length_max"], "histogram": None}
        e["empty"], e["padded"] = row[p + "empty"], row[p + "padded"]
    if measure == "instant" and present:
        e["earliest"], e["latest"] = rfc3339(row[p + "earliest_micros"]), rfc3339(row[p + "latest_micros"])
        e["future_share"] = row[p + "future"] / present
    if measure in ("list", "map") and present:
        e["list_lengths"] = {"min": row[p + "size_min"], "mean": row[p + "size_mean"], "max": row[p + "size_max"], "histogram": None}
    if no_examples:
        for key in ("min", "max", "earliest", "latest"):
            e.pop(key, None)
    return e


def main():
    here = os.path.splitext(os.path.abspath(__file__))[0]
    parser = argparse.ArgumentParser(description="Profile a source with Spark and write a Plumbline report.")
    parser.add_argument("--source", default=PLAN["source"], help="the data to profile (default: %(default)s)")
    parser.add_argument("--script", default=here + ".sql", help="the Spark SQL script (default: %(default)s)")
    parser.add_argument("--report", required=True, help="where to write the report (JSON)")
    parser.add_argument("--master", help="Spark master, e.g. local[*] (default: spark-submit's or local)")
    parser.add_argument("--no-examples", action="store_true", help="leave data values out of the report")
    args = parser.parse_args()
    with open(args.script, encoding="utf-8") as f:
        script = f.read()

    from pyspark.sql import SparkSession

    builder = SparkSession.builder.appName("plumbline-profile").config("spark.sql.session.timeZone", "UTC")
    if args.master:
        builder = builder.master(args.master)
    spark = builder.getOrCreate()
    try:
        report = run(spark, args.source, script, args.no_examples)
    finally:
        spark.stop()
    tmp = args.report + ".part"
    with open(tmp, "w", encoding="utf-8") as f:
        json.dump(report, f, indent=2, ensure_ascii=False, allow_nan=False)
        f.write("\n")
    os.replace(tmp, args.report)
    print("wrote %s: %d fields, %d rows" % (args.report, len(report["fields"]), report["source"]["rows"]), file=sys.stderr)


if __name__ == "__main__":
    main()
