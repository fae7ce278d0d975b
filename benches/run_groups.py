"""The command line the gate benches share: `--unchanged RUN... --changed RUN... --design NAME
[--runs N]` (imported by gate-history.py and gate-recheck.py)."""
import os


def parse(args):
    """(unchanged runs, changed runs, design, runs): run folders as absolute paths."""
    groups, key, design, runs = {"--unchanged": [], "--changed": []}, None, None, 5
    i = 0
    while i < len(args):
        a = args[i]
        if a in groups:
            key = a
        elif a in ("--design", "--runs"):
            if a == "--design":
                design = args[i + 1]
            else:
                runs = int(args[i + 1])
            i += 1
        elif key:
            groups[key].append(os.path.abspath(a))
        i += 1
    return groups["--unchanged"], groups["--changed"], design, runs
