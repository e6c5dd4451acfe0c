#!/usr/bin/env bash
# The Python package's test stage (run by scripts/test-all.sh after the Rust suite): a fresh
# virtual environment in a temporary directory, `pip install ./python` exactly as the README
# says (maturin comes from PyPI through pip's build isolation), the test dependencies from
# PyPI, pytest, and the example script into a temporary directory.
#
# The extension is built in release into the repository's target/ directory, so a later run
# on the same checkout reuses its build (the first build compiles the dependencies again, as
# PyO3's build settings differ from the root crate's).
set -euo pipefail
cd "$(dirname "$0")/.."
repo=$(pwd)

# Debian's Python splits venv (and ensurepip) into python3-venv; install it when missing.
if ! python3 -m venv --help >/dev/null 2>&1 || ! python3 -c 'import ensurepip' 2>/dev/null; then
    if [ "$(id -u)" = 0 ] && command -v apt-get >/dev/null; then
        apt-get update -qq
        DEBIAN_FRONTEND=noninteractive apt-get install -y -qq python3-venv python3-pip
    else
        echo "python/test.sh: python3 -m venv is not available; install python3-venv" >&2
        exit 1
    fi
fi

work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
started=$(date +%s)

# The binary the tests compare against (CLI CSV and one-line errors).
cargo build --release --quiet --bin cagerank
export CAGERANK_BIN="$repo/target/release/cagerank"
export CARGO_TARGET_DIR="$repo/target"

python3 -m venv "$work/venv"
py="$work/venv/bin/python"
"$py" -m pip install --quiet --upgrade pip
"$py" -m pip install --quiet ./python
"$py" -m pip install --quiet pytest pandas ase rdkit matplotlib
echo "python/test.sh: installed in $(( $(date +%s) - started )) s"

# Run from the temporary directory so that `import cagerank` finds the installed package,
# not the source folder.
(cd "$work" && "$py" -m pytest -q "$repo/python/tests" -p no:cacheprovider)

(cd "$work" && MPLBACKEND=Agg "$py" "$repo/examples/screen_c84.py" --out "$work/screen_c84.png")
test -s "$work/screen_c84.png"
echo "python/test.sh: done in $(( $(date +%s) - started )) s"
