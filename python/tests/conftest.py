"""Shared fixtures: the repository's folders and the `skyclock` command line that the
bindings are compared with (built by `cargo build --release`; CI builds it first)."""

import json
import os
import subprocess
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[2]
DATASETS = ROOT / "datasets"
ENVELOPE = {"schema_version", "provenance", "inputs", "outputs"}


def command_line_binary() -> Path:
    """The command line to compare with: $SKYCLOCK_CLI, else the release binary in
    $CARGO_TARGET_DIR or target/. A missing binary fails the tests (never a silent skip)."""
    candidates = []
    if os.environ.get("SKYCLOCK_CLI"):
        candidates.append(Path(os.environ["SKYCLOCK_CLI"]))
    if os.environ.get("CARGO_TARGET_DIR"):
        candidates.append(Path(os.environ["CARGO_TARGET_DIR"]) / "release" / "skyclock")
    candidates.append(ROOT / "target" / "release" / "skyclock")
    for c in candidates:
        if c.is_file():
            return c
    pytest.fail(
        "the skyclock command line is not built (looked at "
        + ", ".join(map(str, candidates))
        + "); run `cargo build --release` first or set SKYCLOCK_CLI"
    )


@pytest.fixture(scope="session")
def cli():
    """Runs the command line with the given arguments and returns its --json summary (on
    stdout; notes go to stderr),
    without the envelope (schema version, provenance, inputs, outputs)."""
    binary = command_line_binary()

    def run(*args):
        done = subprocess.run([str(binary), *map(str, args), "--json"], capture_output=True, text=True)
        if done.returncode != 0:
            raise AssertionError(f"skyclock {' '.join(map(str, args))} failed:\n{done.stderr}")
        doc = json.loads(done.stdout)
        return {k: v for k, v in doc.items() if k not in ENVELOPE}

    return run


@pytest.fixture(scope="session")
def cli_error():
    """Runs the command line expecting failure; returns its error text."""
    binary = command_line_binary()

    def run(*args):
        done = subprocess.run([str(binary), *map(str, args)], capture_output=True, text=True)
        assert done.returncode != 0, f"skyclock {' '.join(map(str, args))} unexpectedly succeeded"
        return done.stderr

    return run


def pytest_sessionfinish(session, exitstatus):
    """With SKYCLOCK_NO_SKIPS=1 (set by .ci/run) a skipped test fails the run: nothing a
    test needs may be skipped silently in CI."""
    reporter = session.config.pluginmanager.get_plugin("terminalreporter")
    skipped = reporter.stats.get("skipped", []) if reporter else []
    if os.environ.get("SKYCLOCK_NO_SKIPS") == "1" and skipped:
        reporter.write_line(f"{len(skipped)} test(s) skipped; SKYCLOCK_NO_SKIPS=1 forbids skips", red=True)
        session.exitstatus = 1
