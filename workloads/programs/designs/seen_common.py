"""Reading the deliveries' grower column and writing the mailing list (standard library csv)."""
import csv


def load(path):
    with open(path, newline="") as f:
        rows = csv.reader(f)
        header = next(rows)
        at = header.index("grower")
        return [int(r[at]) for r in rows]


def save(result, path):
    with open(path, "w", newline="") as f:
        w = csv.writer(f)
        w.writerow(["grower"])
        w.writerows([g] for g in result)
