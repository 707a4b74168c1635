#!/usr/bin/env python3
"""Runs lake plans written by `plumbline plan` on Spark (pyspark, local mode).

    run_plans.py DRIVER.py...

Each driver is imported and its `run` called with one shared SparkSession
(starting Spark once per plan would cost a JVM start each). For
`NAME.py` the report is written to `NAME.report.json`; when Spark refuses
the plan, its error goes to `NAME.error.txt` instead and the test judges
whether that was expected. Exit code 3 when pyspark is not installed.
"""

import importlib.util
import json
import os
import sys
import time

try:
    from pyspark.sql import SparkSession
except ImportError as e:
    print("pyspark is not installed: %s" % e, file=sys.stderr)
    sys.exit(3)


def main():
    drivers = sys.argv[1:]
    spark = (
        SparkSession.builder.master("local[2]")
        .appName("plumbline-plan-check")
        .config("spark.sql.session.timeZone", "UTC")
        .config("spark.ui.enabled", "false")
        .config("spark.sql.shuffle.partitions", "2")
        .config("spark.driver.memory", "3g")
        .getOrCreate()
    )
    spark.sparkContext.setLogLevel("ERROR")
    try:
        for i, path in enumerate(drivers):
            stem = os.path.splitext(path)[0]
            spec = importlib.util.spec_from_file_location("plumbline_plan_%d" % i, path)
            module = importlib.util.module_from_spec(spec)
            spec.loader.exec_module(module)
            with open(stem + ".sql", encoding="utf-8") as f:
                script = f.read()
            started = time.monotonic()
            try:
                report = module.run(spark, module.PLAN["source"], script, False)
            except Exception as e:  # Spark's own refusal, judged by the test
                lines = str(e).strip().splitlines() or [repr(e)]
                # A Java failure says what went wrong in its last "Caused by".
                causes = [l.strip() for l in lines if l.strip().startswith("Caused by:")]
                first = causes[-1] if causes else lines[0]
                with open(stem + ".error.txt", "w", encoding="utf-8") as f:
                    f.write(first)
                print("%s: refused: %s" % (path, first), file=sys.stderr)
                continue
            print("%s: %.1f s" % (path, time.monotonic() - started), file=sys.stderr)
            with open(stem + ".report.json", "w", encoding="utf-8") as f:
                json.dump(report, f, indent=2, ensure_ascii=False, allow_nan=False)
    finally:
        spark.stop()


if __name__ == "__main__":
    main()
