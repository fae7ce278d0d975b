"""Reading and writing the weighbridge ledger with the standard library's csv module."""
import csv


def load(path):
    with open(path, newline="") as f:
        rows = csv.reader(f)
        header = next(rows)
        return header, [tuple(r) for r in rows]


def save(result, path):
    header, rows = result
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(header)
        w.writerows(rows)
