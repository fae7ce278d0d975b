"""First delivery order, membership asked of a set."""
from seen_common import load, save  # noqa: F401


def run(growers):
    seen = set()
    order = []
    for g in growers:
        if g not in seen:
            seen.add(g)
            order.append(g)
    return order
