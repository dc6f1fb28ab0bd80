# Shared set-up for the scripts: make .venv if missing, install trundle into it (editable).
# Usage: source scripts/_env.sh [extra]   e.g. "test" installs the test extra too.
set -euo pipefail
root="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
cd "$root"
python_bin="${PYTHON:-python3}"
if ! command -v "$python_bin" >/dev/null 2>&1; then
  echo "error: $python_bin not found; install Python 3.11 or newer (or set PYTHON=...)" >&2
  exit 2
fi
if ! "$python_bin" -c 'import sys; sys.exit(0 if sys.version_info >= (3, 11) else 1)'; then
  echo "error: trundle needs Python 3.11 or newer; $python_bin is $("$python_bin" -V 2>&1)" >&2
  exit 2
fi
if [ ! -x .venv/bin/python ]; then
  echo "setting up .venv (first run only) ..."
  "$python_bin" -m venv .venv
fi
venv_python="$root/.venv/bin/python"
extra="${1:-}"
spec="."
[ -n "$extra" ] && spec=".[$extra]"
stamp=".venv/.installed-${extra:-base}"
# reinstall only when the project definition changed since the last install
if [ ! -f "$stamp" ] || [ pyproject.toml -nt "$stamp" ]; then
  # say what is installed and about how long it takes, and show that it is still working
  what="trundle and numpy, scipy, numba, matplotlib, click, pint, rich, jinja2, rainflow,"
  what="$what dask[distributed], pyarrow"
  [ "$extra" = "test" ] && what="$what, and the test tools (pytest, hypothesis, sympy, ruff)"
  echo "installing into .venv: $what"
  echo "  (the first time this downloads about 300 MB and takes 1-5 minutes, depending on the"
  echo "   network; later runs skip it unless pyproject.toml changed; a dot every 10 s)"
  ( while sleep 10; do printf '.' >&2; done ) &
  ticker=$!
  trap 'kill "$ticker" 2>/dev/null || true' EXIT
  started=$SECONDS
  "$venv_python" -m pip install --quiet --quiet --upgrade pip
  "$venv_python" -m pip install --quiet --quiet -e "$spec"
  kill "$ticker" 2>/dev/null || true
  trap - EXIT
  echo
  echo "installed in $((SECONDS - started)) s"
  touch "$stamp"
fi
export PATH="$root/.venv/bin:$PATH"
