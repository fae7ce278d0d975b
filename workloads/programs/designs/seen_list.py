"""First delivery order, membership asked of a list (a scan of everything kept)."""
from seen_common import load, save  # noqa: F401


def run(growers):
    seen = []
    for g in growers:
        if g not in seen:
            seen.append(g)
    return seen
