#!/usr/bin/env bash
# Make the Python environment the dataframe-library examples need (workloads/programs/):
# a virtual environment holding the polars package from PyPI.
#
#   scripts/python-env.sh                     # .venv-examples/ with polars 1.44.2
#   scripts/python-env.sh 1.40.1 .venv-older  # another version beside it (to compare an upgrade)
#
# Idempotent and safe to run from several processes at once (a lock file); the tests run it
# themselves, so a fresh clone needs nothing else.
set -euo pipefail
cd "$(dirname "$0")/.."
VERSION="${1:-1.44.2}"
VENV="${2:-.venv-examples}"
command -v python3 >/dev/null || { echo "python-env: python3 is missing" >&2; exit 1; }
exec 9>"$VENV.lock"
flock 9
if [ -x "$VENV/bin/python" ] && "$VENV/bin/python" -c "import sys, polars; sys.exit(polars.__version__ != '$VERSION')" 2>/dev/null; then
    exit 0
fi
rm -rf "$VENV"
python3 -m venv "$VENV"
"$VENV/bin/python" -m pip install --quiet --disable-pip-version-check "polars==$VERSION"
"$VENV/bin/python" -c "import polars; print('python-env: polars', polars.__version__, 'in $VENV')"
