#!/usr/bin/env bash
# Sluice's test command, run from a fresh clone:  bash tests/run.sh [extra cargo test args]
#
# 1. makes sure python3 can import h5py (the outside reader of our HDF5 snapshots,
#    used by tests/h5py_read.rs), installing it from PyPI with pip if needed;
# 2. runs `cargo test --workspace --release "$@"`, doc-tests first and then the
#    unit and integration tests, so the closing summary lines are those of real
#    test binaries rather than of (often empty) doc-test runs.
set -euo pipefail

cd "$(dirname "${BASH_SOURCE[0]}")/.."

say() { echo "tests/run.sh: $*"; }

if ! command -v python3 >/dev/null 2>&1; then
    say "python3 not found; install Python 3 with pip (needed for the h5py snapshot check)" >&2
    exit 1
fi

if ! python3 -c "import h5py" >/dev/null 2>&1; then
    say "h5py is not importable by $(command -v python3); installing it with pip (numpy comes with it)"
    export PIP_DISABLE_PIP_VERSION_CHECK=1 PIP_ROOT_USER_ACTION=ignore PIP_NO_INPUT=1
    if ! python3 -m pip --version >/dev/null 2>&1; then
        say "python3 has no pip module; install pip (e.g. 'python3 -m ensurepip' or apt-get install python3-pip)" >&2
        exit 1
    fi
    if ! python3 -m pip install --quiet h5py; then
        say "pip refused a plain install; retrying with --break-system-packages"
        python3 -m pip install --quiet --break-system-packages h5py
    fi
    if ! python3 -c "import h5py" >/dev/null 2>&1; then
        say "h5py was installed but python3 still cannot import it:" >&2
        python3 -c "import h5py" >&2 || true
        exit 1
    fi
fi
say "using $(python3 -c 'import sys, h5py; print(f"python {sys.version.split()[0]}, h5py {h5py.__version__}, HDF5 {h5py.version.hdf5_version}")')"

say "cargo test --workspace --release --doc $*"
cargo test --workspace --release --doc "$@"
say "cargo test --workspace --release --lib --bins --tests $*"
exec cargo test --workspace --release --lib --bins --tests "$@"
