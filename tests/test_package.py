"""Wiring of the package: public names, version, command line."""

import subprocess
import sys

import pytest

import gvflow as gv


def test_all_names_importable():
    for name in gv.__all__:
        assert hasattr(gv, name), name


def test_version_is_single_sourced():
    from importlib.metadata import version

    assert version("gvflow") == gv.__version__


@pytest.mark.slow  # subprocess, process pool or kernel start-up
def test_demo_runs_and_prints_caution():
    out = subprocess.run([sys.executable, "-m", "gvflow.cli", "demo"], capture_output=True, text=True,
                         check=True).stdout
    assert "licensed engineer" in out
