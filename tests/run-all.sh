#!/usr/bin/env bash
# The whole test suite, Rust and Python, as the README says; .ci/run calls this same script.
#   1. cargo test --locked                      (the library, the CLI, the docs examples)
#   2. a fresh virtual environment with maturin, NumPy and pytest from PyPI, the package
#      installed into it with `pip install .` (the README's install command), then pytest
#      on tests/python against the installed wheel.
# Prints both summaries and a closing total. Needs cargo and python3 (3.9 or later) with venv.
set -euo pipefail
cd "$(dirname "$0")/.."
PY="${PYTHON:-python3}"
for tool in cargo "$PY"; do
  if ! command -v "$tool" >/dev/null 2>&1; then
    echo "$tool not found: install the Rust toolchain (https://rustup.rs) and Python 3 first" >&2
    exit 1
  fi
done
work="$(mktemp -d "${TMPDIR:-/tmp}/pathsieve-tests.XXXXXX")"
trap 'rm -rf "$work"' EXIT

echo "== Rust: cargo test --locked"
set +e
cargo test --locked 2>&1 | tee "$work/rust.log"
rust_rc=${PIPESTATUS[0]}
set -e
read -r rust_passed rust_failed < <(awk '/^test result:/ {p += $4; f += $6} END {print p + 0, f + 0}' "$work/rust.log")

echo "== Python: fresh virtual environment, pip install ., pytest"
"$PY" -m venv "$work/venv"
vpy="$work/venv/bin/python"
"$vpy" -m pip install --quiet --disable-pip-version-check "maturin>=1.9.4,<2" numpy pytest
"$vpy" -m pip install --disable-pip-version-check --quiet .
set +e
(cd tests/python && "$vpy" -m pytest -p no:cacheprovider -q . 2>&1) | tee "$work/python.log"
py_rc=${PIPESTATUS[0]}
set -e
py_line="$(grep -E '^(=+ )?[0-9]+ (passed|failed)|no tests ran' "$work/python.log" | tail -n 1 || true)"
# (grep finds nothing when there is nothing to count: `|| true` keeps pipefail from ending the run)
py_passed="$({ grep -oE '[0-9]+ passed' <<<"$py_line" || true; } | awk '{s += $1} END {print s + 0}')"
py_failed="$({ grep -oE '[0-9]+ (failed|errors?)' <<<"$py_line" || true; } | awk '{s += $1} END {print s + 0}')"

echo
echo "== Summary"
echo "Rust (cargo test --locked): ${rust_passed} passed, ${rust_failed} failed (exit ${rust_rc})"
echo "Python (pytest tests/python, installed wheel): ${py_line:-no summary} (exit ${py_rc})"
if [ "$rust_rc" -ne 0 ] || [ "$py_rc" -ne 0 ]; then
  # pytest exit 5 (no tests collected) counts as a failure too.
  echo "total: $((rust_passed + py_passed)) passed, $((rust_failed + py_failed)) failed"
  exit 1
fi
echo "total: $((rust_passed + py_passed)) passed, $((rust_failed + py_failed)) failed"
