"""Shared paths for the package tests: the repository, its shipped catalogue and the CLI."""

import os
import shutil
from pathlib import Path

import pytest

REPO = Path(__file__).resolve().parents[2]


@pytest.fixture(scope="session")
def repo() -> Path:
    return REPO


@pytest.fixture(scope="session")
def shipped_catalogue() -> Path:
    return REPO / "catalogues"


@pytest.fixture(scope="session")
def cli() -> str:
    """The cagerank binary built from this checkout: $CAGERANK_BIN (python/test.sh builds it
    and sets it), else target/release/cagerank."""
    path = os.environ.get("CAGERANK_BIN") or str(REPO / "target" / "release" / "cagerank")
    if not (os.path.isfile(path) and os.access(path, os.X_OK)):
        found = shutil.which("cagerank")
        if found is None:
            pytest.fail("no cagerank binary: run `cargo build --release` or set CAGERANK_BIN")
        path = found
    return path
