"""First delivery order with dict.fromkeys (keys keep insertion order)."""
from seen_common import load, save  # noqa: F401


def run(growers):
    return list(dict.fromkeys(growers))
