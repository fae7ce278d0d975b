"""Newest first by appending in arrival order and reversing once."""
from ledger_common import load, save  # noqa: F401


def run(data):
    header, rows = data
    ledger = []
    for r in rows:
        ledger.append(r)
    ledger.reverse()
    return header, ledger
