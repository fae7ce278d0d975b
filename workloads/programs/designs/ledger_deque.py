"""Newest first with a deque that grows at its left end."""
from collections import deque

from ledger_common import load, save as save_rows


def run(data):
    header, rows = data
    ledger = deque()
    for r in rows:
        ledger.appendleft(r)
    return header, ledger


def save(result, path):
    header, ledger = result
    save_rows((header, list(ledger)), path)
