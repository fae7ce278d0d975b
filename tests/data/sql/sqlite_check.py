"""Run one query with Python's standard-library sqlite3 and compare its result with polars'.

Reference: the sqlite3 module of the Python standard library (SQLite's own SQL engine),
https://docs.python.org/3/library/sqlite3.html. Called by tests/sql_reference.rs with a folder
holding `schema.json` ({table: [[column, type], ...]}, types int/float/text/date/bool),
one `<table>.csv` per table, `query.sql`, `result.csv` (polars' result) and
`result.json` (its column types). Prints `ok <rows>` or the first differences; exit 1 on a
difference.

Dialect notes (named beside the check, as the test asks):
- SQLite has no date type: dates are loaded as ISO text (YYYY-MM-DD), which orders the same.
- SQLite has no boolean type: true/false are loaded as 1/0.
- A query without ORDER BY has no defined row order in either engine: both results are
  sorted before comparing. With ORDER BY the order is compared as is.
- Floats are compared with a relative tolerance of 1e-9 (sums may be added in another order).
"""
import csv
import json
import math
import sqlite3
import sys
from pathlib import Path


def convert(value, kind):
    if value == "":
        return None
    if kind == "int":
        return int(value)
    if kind == "float":
        return float(value)
    if kind == "bool":
        return 1 if value == "true" else 0
    return value


def load(path, kinds):
    with open(path, newline="") as f:
        rows = list(csv.reader(f))
    header, body = rows[0], rows[1:]
    return header, [tuple(convert(v, k) for v, k in zip(r, kinds)) for r in body]


def same(a, b):
    if isinstance(a, float) or isinstance(b, float):
        if a is None or b is None:
            return a is b
        return math.isclose(float(a), float(b), rel_tol=1e-9, abs_tol=1e-9)
    return a == b


def key(row):
    return tuple((v is None, str(type(v).__name__), v if v is not None else 0) for v in row)


def main(folder):
    folder = Path(folder)
    schema = json.loads((folder / "schema.json").read_text())
    con = sqlite3.connect(":memory:")
    for table, cols in schema.items():
        types = {"int": "INTEGER", "float": "REAL", "text": "TEXT", "date": "TEXT", "bool": "INTEGER"}
        con.execute(f'CREATE TABLE "{table}" (' + ", ".join(f'"{c}" {types[k]}' for c, k in cols) + ")")
        _, rows = load(folder / f"{table}.csv", [k for _, k in cols])
        con.executemany(f'INSERT INTO "{table}" VALUES (' + ",".join("?" * len(cols)) + ")", rows)
    query = (folder / "query.sql").read_text()
    expected = [tuple(r) for r in con.execute(query).fetchall()]
    kinds = json.loads((folder / "result.json").read_text())
    _, got = load(folder / "result.csv", kinds)
    if "order by" not in query.lower():
        expected.sort(key=key)
        got.sort(key=key)
    if len(expected) != len(got):
        print(f"row counts differ: sqlite3 {len(expected)}, polars {len(got)}")
        return 1
    for i, (e, g) in enumerate(zip(expected, got)):
        if len(e) != len(g) or not all(same(x, y) for x, y in zip(e, g)):
            print(f"row {i} differs: sqlite3 {e}, polars {g}")
            return 1
    print(f"ok {len(got)}")
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1]))
