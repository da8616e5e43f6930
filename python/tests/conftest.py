"""Shared fixtures: the repository's folders and the `tidewater` command
(built by python/run_tests.sh before pytest runs; TIDEWATER_BIN names
another)."""

import os
import pathlib
import subprocess

import pytest

ROOT = pathlib.Path(__file__).resolve().parents[2]
SCENARIOS = ROOT / "scenarios"
BAD_SCRIPTS = ROOT / "tests" / "bad_scripts"


def sig(x, digits=7):
    """A number as the command line's CSV writer prints it: `digits`
    significant digits, trailing zeros dropped (a re-statement of
    cli/src/format.rs `sig`, to compare with samples.csv as printed)."""
    import math

    if math.isnan(x):
        return "NaN"
    if math.isinf(x):
        return "inf" if x > 0 else "-inf"
    if x == 0:
        return "0"
    magnitude = math.floor(math.log10(abs(x)))
    decimals = min(max(digits - 1 - magnitude, 0), 12)
    text = "{:.{}f}".format(x, decimals)
    if "." in text:
        text = text.rstrip("0").rstrip(".")
    if set(text.lstrip("-")) <= {"0"}:
        return "0"
    return text


@pytest.fixture(scope="session")
def cli():
    """The `tidewater` command."""
    path = os.environ.get("TIDEWATER_BIN", str(ROOT / "target" / "debug" / "tidewater"))
    if not os.access(path, os.X_OK):
        pytest.fail(f"{path} not found: build it with `cargo build -p tidewater-cli`")
    return path


@pytest.fixture(scope="session")
def rendered(cli, tmp_path_factory):
    """Every bundled scenario's report, rendered once by the command line."""
    out = tmp_path_factory.mktemp("reports")
    subprocess.run(
        [cli, "render-reports", "scenarios", str(out)],
        cwd=ROOT,
        check=True,
        stdout=subprocess.DEVNULL,
    )
    return out
