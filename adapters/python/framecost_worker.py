#!/usr/bin/env python3
"""framecost worker for Python designs (standard library only).

Run as:  python3 adapters/python/framecost_worker.py DESIGN.py

DESIGN.py defines
    load(path)          -> data     untimed: read the table framecost wrote for this size
    run(data)           -> result   timed: the design itself; must not change `data`
    save(result, path)              optional, untimed: write the result (same format as the
                                    input: the request says which) for the equivalence check
and optionally describe() -> str, added to what the worker reports about its runtime.

The worker speaks framecost's JSON-lines protocol on stdin/stdout (docs/programs.md).
Anything the design prints goes to stderr, which framecost keeps in the design's log.
"""

import gc
import importlib.util
import json
import os
import platform
import sys
import time
import traceback

PROTOCOL = 1


def clock_cost_ns():
    """Median cost of one reading of the clock used to time runs (ns)."""
    pc = time.perf_counter_ns
    costs = []
    for _ in range(5):
        t0 = pc()
        for _ in range(1000):
            pc()
        costs.append((pc() - t0) / 1000.0)
    costs.sort()
    return costs[len(costs) // 2]


def load_design(path):
    spec = importlib.util.spec_from_file_location("framecost_design", path)
    if spec is None or spec.loader is None:
        raise ImportError(f"cannot load {path} as a Python module")
    module = importlib.util.module_from_spec(spec)
    sys.path.insert(0, os.path.dirname(os.path.abspath(path)))
    spec.loader.exec_module(module)
    for name in ("load", "run"):
        if not callable(getattr(module, name, None)):
            raise AttributeError(f"{path} must define {name}()")
    return module


def main(argv):
    if len(argv) != 2:
        sys.stderr.write("usage: framecost_worker.py DESIGN.py\n")
        return 2
    out = sys.stdout
    # Protocol lines only on the real stdout; a design's prints go to the log.
    sys.stdout = sys.stderr

    def send(obj):
        out.write(json.dumps(obj, separators=(",", ":")) + "\n")
        out.flush()

    try:
        design = load_design(argv[1])
    except BaseException as e:  # report, then leave: framecost shows the message
        traceback.print_exc()
        send({"ok": False, "error": f"{type(e).__name__}: {e}", "trace": traceback.format_exc()[-4000:]})
        return 1
    runtime = f"{platform.python_implementation()} {platform.python_version()} ({sys.executable})"
    describe = getattr(design, "describe", None)
    if callable(describe):
        try:
            runtime += f"; {describe()}"
        except Exception as e:  # a broken describe() is not worth failing the design
            runtime += f"; describe() failed: {type(e).__name__}"
    send({"framecost_worker": PROTOCOL, "runtime": runtime, "clock_ns": clock_cost_ns()})

    run = design.run
    pc = time.perf_counter_ns
    data = None
    result = None
    for line in sys.stdin:
        line = line.strip()
        if not line:
            continue
        try:
            req = json.loads(line)
            op = req.get("op")
            if op == "load":
                data = None
                result = None
                gc.collect()
                t0 = pc()
                data = design.load(req["path"])
                send({"ok": True, "ns": pc() - t0})
            elif op == "run":
                times = int(req["times"])
                if times < 1:
                    raise ValueError("times must be at least 1")
                ns = [0] * times
                for i in range(times):
                    # The previous result is released before the clock starts.
                    result = None
                    t0 = pc()
                    r = run(data)
                    t1 = pc()
                    ns[i] = t1 - t0
                    result = r
                send({"ok": True, "ns": ns})
            elif op == "save":
                save = getattr(design, "save", None)
                if callable(save) and result is not None:
                    save(result, req["path"])
                    send({"ok": True, "saved": True})
                else:
                    send({"ok": True, "saved": False})
            elif op == "bye":
                send({"ok": True})
                return 0
            else:
                send({"ok": False, "error": f"unknown op {op!r}"})
        except Exception as e:
            traceback.print_exc()
            send({"ok": False, "error": f"{type(e).__name__}: {e}", "trace": traceback.format_exc()[-4000:]})
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv))
