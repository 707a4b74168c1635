"""Checks generated record types with tools outside Plumbline.

  python-module MODULE ROWS ROOT   imports the generated Python module with
                                   python3, builds ROOT.from_dict(row) for
                                   every JSON Lines row and checks every
                                   attribute against its type hint
  python-keywords                  prints keyword.kwlist (this python3's own list)
  parquet-rows PARQUET OUT         writes the Parquet file's rows, as pyarrow
                                   reads them, as JSON Lines (instants and dates
                                   in ISO 8601, decimals as text, maps as objects)
  corpus-json-schema MANIFEST      for each {schema, parquet} in the JSON
                                   manifest: the parquet rows against the schema
  json-schema SCHEMA ROWS          checks the schema against the draft 2020-12
                                   metaschema (python-jsonschema) and
                                   validates every row, formats included

Prints the number of rows that fit; exits 1 at the first row that does not
(naming its line), 3 when a needed package is missing.
"""

import dataclasses
import importlib.util
import json
import sys
import typing


def rows(path):
    with open(path, encoding="utf-8") as f:
        for number, line in enumerate(f, 1):
            yield number, json.loads(line)


def conforms(value, hint):
    """True when `value` is of the type hint (typing's own view of it)."""
    if hint is typing.Any:
        return True
    origin, args = typing.get_origin(hint), typing.get_args(hint)
    if origin is typing.Union:
        return any(conforms(value, a) for a in args)
    if origin is list:
        return isinstance(value, list) and all(conforms(v, args[0]) for v in value)
    if origin is dict:
        return isinstance(value, dict) and all(conforms(k, args[0]) and conforms(v, args[1]) for k, v in value.items())
    if hint is type(None):
        return value is None
    if dataclasses.is_dataclass(hint):
        return isinstance(value, hint) and instance_conforms(value)
    if hint is int:
        return isinstance(value, int) and not isinstance(value, bool)
    return isinstance(value, hint)


def instance_conforms(instance):
    hints = typing.get_type_hints(type(instance))
    for field in dataclasses.fields(instance):
        value = getattr(instance, field.name)
        if not conforms(value, hints[field.name]):
            raise TypeError(f"{field.name} = {value!r} is not {hints[field.name]}")
    return True


def python_module(module_path, rows_path, root):
    spec = importlib.util.spec_from_file_location("generated_types", module_path)
    module = importlib.util.module_from_spec(spec)
    # As `import` does: dataclasses look the module up while building classes.
    sys.modules["generated_types"] = module
    spec.loader.exec_module(module)
    cls = getattr(module, root)
    count = 0
    for number, row in rows(rows_path):
        try:
            instance_conforms(cls.from_dict(row))
        except Exception as e:  # any failure is a row that does not fit
            sys.exit(f"line {number}: {type(e).__name__}: {e}")
        count += 1
    print(count)


def needs(*modules):
    """Imports the modules, or exits 3 (a needed package is missing)."""
    import importlib

    try:
        return [importlib.import_module(m) for m in modules]
    except ImportError as e:
        print(e, file=sys.stderr)
        sys.exit(3)


def validator_for(schema_path):
    """A draft 2020-12 validator with format checks (rfc3339-validator makes
    `date-time` checked); the schema itself is checked against the metaschema."""
    jsonschema, _ = needs("jsonschema", "rfc3339_validator")
    with open(schema_path, encoding="utf-8") as f:
        schema = json.load(f)
    jsonschema.Draft202012Validator.check_schema(schema)
    return jsonschema.Draft202012Validator(schema, format_checker=jsonschema.Draft202012Validator.FORMAT_CHECKER)


def first_error(validator, numbered_rows):
    """`line N: path: message` of the first row that does not validate."""
    import jsonschema

    for number, row in numbered_rows:
        error = jsonschema.exceptions.best_match(validator.iter_errors(row))
        if error is not None:
            return f"line {number}: {error.json_path}: {error.message}"
    return None


def json_schema(schema_path, rows_path):
    validator = validator_for(schema_path)
    all_rows = list(rows(rows_path))
    error = first_error(validator, all_rows)
    if error:
        sys.exit(error)
    print(len(all_rows))


def plain(value, arrow_type):
    """A pyarrow row value as JSON would carry it: ISO 8601 text for dates
    and times, decimal text, base64 for bytes, objects for maps."""
    import base64
    import datetime
    import decimal
    import uuid

    import pyarrow as pa

    if value is None:
        return None
    if pa.types.is_duration(arrow_type):
        # The count in the column's unit, as the generated schemas say.
        per = {"s": datetime.timedelta(seconds=1), "ms": datetime.timedelta(milliseconds=1), "us": datetime.timedelta(microseconds=1)}
        return value // per[arrow_type.unit] if arrow_type.unit in per else value.value
    if pa.types.is_float16(arrow_type):
        return float(value)
    if pa.types.is_dictionary(arrow_type):
        return plain(value, arrow_type.value_type)
    if pa.types.is_map(arrow_type):
        return {str(k): plain(v, arrow_type.item_type) for k, v in value}
    if pa.types.is_struct(arrow_type):
        return {f.name: plain(value[f.name], f.type) for f in arrow_type}
    if pa.types.is_list(arrow_type) or pa.types.is_large_list(arrow_type) or pa.types.is_fixed_size_list(arrow_type):
        return [plain(v, arrow_type.value_type) for v in value]
    if isinstance(value, (datetime.datetime, datetime.date, datetime.time)):
        return value.isoformat()
    if isinstance(value, decimal.Decimal):
        return str(value)
    if isinstance(value, bytes):
        return base64.b64encode(value).decode("ascii")
    if isinstance(value, uuid.UUID):  # pyarrow's view of the arrow.uuid extension
        return str(value)
    return value


def parquet_json_rows(path):
    """Rows of a Parquet or Arrow IPC file (`.arrow_file`), via pyarrow."""
    import pyarrow as pa
    import pyarrow.parquet as pq

    table = pa.ipc.open_file(path).read_all() if str(path).endswith(".arrow_file") else pq.read_table(path)
    # Column by column: a name repeated at the top keeps its first column,
    # as the generated types do (a dict per row would keep the last).
    columns = [(f, table.column(i).to_pylist()) for i, f in enumerate(table.schema)]
    rows = []
    for r in range(table.num_rows):
        record = {}
        for f, values in columns:
            if f.name not in record:
                record[f.name] = plain(values[r], f.type)
        rows.append(record)
    return rows


def parquet_rows(parquet_path, out_path):
    needs("pyarrow")
    with open(out_path, "w", encoding="utf-8") as out:
        for record in parquet_json_rows(parquet_path):
            out.write(json.dumps(record, ensure_ascii=False) + "\n")


def corpus_json_schema(manifest_path):
    """Validates each file's rows (as pyarrow reads them) against its
    generated schema. Prints {file: {"rows": n} | {"skipped": why} |
    {"error": what}}; files pyarrow cannot turn into Python values are
    skipped with pyarrow's reason."""
    jsonschema, _ = needs("jsonschema", "pyarrow")
    with open(manifest_path, encoding="utf-8") as f:
        manifest = json.load(f)
    results = {}
    for entry in manifest:
        try:
            table_rows = parquet_json_rows(entry["parquet"])
        except Exception as e:  # pyarrow's own limits, reported per file
            results[entry["parquet"]] = {"skipped": f"{type(e).__name__}: {e}"}
            continue
        try:
            validator = validator_for(entry["schema"])
        except jsonschema.exceptions.SchemaError as e:
            results[entry["parquet"]] = {"error": f"invalid schema: {e.message}"}
            continue
        error = first_error(validator, enumerate(table_rows, 1))
        results[entry["parquet"]] = {"error": error} if error else {"rows": len(table_rows)}
    print(json.dumps(results))


def main():
    command = sys.argv[1]
    if command == "python-module":
        python_module(sys.argv[2], sys.argv[3], sys.argv[4])
    elif command == "python-keywords":
        import keyword

        print(json.dumps(sorted(keyword.kwlist)))
    elif command == "corpus-json-schema":
        corpus_json_schema(sys.argv[2])
    elif command == "parquet-rows":
        parquet_rows(sys.argv[2], sys.argv[3])
    elif command == "json-schema":
        json_schema(sys.argv[2], sys.argv[3])
    else:
        sys.exit(f"unknown command {command}")


if __name__ == "__main__":
    main()
