"""The project as a user installs it: built and installed into a fresh virtual environment, the console
script run from a folder outside the source tree (the README's first command, then labels and quick).

The wheel is built from a copy of only what the build reads (arcflash/, label_layouts/, pyproject.toml,
README.md), with pip's usual build isolation, and installed with ``--no-deps``; the dependencies are those
of the environment running the tests, made visible to the fresh environment by a ``.pth`` file (so that the
test needs no download of numpy & co. and takes seconds). The installed arcflash comes first on the fresh
environment's path: the test checks that it is the one imported.
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import sysconfig
import tomllib
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]


def test_every_subpackage_is_in_the_build():
    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))
    listed = set(config["tool"]["setuptools"]["packages"])
    found = {".".join(p.parent.relative_to(ROOT).parts) for p in (ROOT / "arcflash").rglob("__init__.py")}
    assert found | {"arcflash.label_layouts"} == listed
    assert config["tool"]["setuptools"]["package-dir"]["arcflash.label_layouts"] == "label_layouts"


def _run(command, cwd, env):
    result = subprocess.run(command, cwd=cwd, env=env, capture_output=True, text=True, timeout=600)
    assert result.returncode == 0, f"{command}\n{result.stdout}\n{result.stderr}"
    return result.stdout


@pytest.fixture(scope="module")
def installed(tmp_path_factory):
    """(python, arcflash script, environment) of a fresh virtual environment with the project installed."""
    base = tmp_path_factory.mktemp("install")
    source = base / "source"
    source.mkdir()
    for name in ("arcflash", "label_layouts"):
        shutil.copytree(ROOT / name, source / name, ignore=shutil.ignore_patterns("__pycache__"))
    for name in ("pyproject.toml", "README.md"):
        shutil.copy2(ROOT / name, source / name)
    venv = base / "venv"
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "PYTHONHOME", "VIRTUAL_ENV")}
    _run([sys.executable, "-m", "venv", str(venv)], base, env)
    python = venv / "bin" / "python"
    _run([str(python), "-m", "pip", "install", "--quiet", "--no-deps", str(source)], base, env)
    purelib = _run([str(python), "-c", "import sysconfig; print(sysconfig.get_paths()['purelib'])"], base, env)
    ours = {sysconfig.get_paths()["purelib"], sysconfig.get_paths()["platlib"]}
    (Path(purelib.strip()) / "test-dependencies.pth").write_text("\n".join(sorted(ours)) + "\n", encoding="utf-8")
    return python, venv / "bin" / "arcflash", env, base


def test_the_installed_package_is_the_one_imported(installed):
    python, _, env, base = installed
    location = _run([str(python), "-c", "import arcflash; print(arcflash.__file__)"], base, env).strip()
    assert Path(location).is_relative_to(base / "venv"), location
    assert (Path(location).parent / "label_layouts" / "label-4x6.yaml").is_file()


def test_the_console_script_runs_outside_the_source_tree(installed, tmp_path):
    _, arcflash, env, _ = installed
    work = tmp_path / "elsewhere"
    shutil.copytree(ROOT / "site_data", work / "site_data")  # labels write their ledger beside the site data
    # The README's first command
    _run([str(arcflash), "study", "site_data/fenwick_ridge", "--out", "study_out"], work, env)
    assert (work / "study_out" / "report.pdf").is_file() and (work / "study_out" / "governing.csv").is_file()
    printed = _run([str(arcflash), "labels", "print", "site_data/fenwick_ridge", "--out", "labels",
                    "--study", "study_out", "--bus", "SWG-A", "--layout", "label-4x4"], work, env)
    assert "1 labels printed" in printed and list((work / "labels").rglob("*.pdf"))
    layout = work / "my-layout.yaml"
    shutil.copy2(ROOT / "label_layouts" / "label-4x6.yaml", layout)  # a layout given as a file path
    _run([str(arcflash), "labels", "print", "site_data/fenwick_ridge", "--out", "mine", "--study", "study_out",
          "--bus", "SWG-B", "--layout", str(layout)], work, env)
    quick = _run([str(arcflash), "quick", "--kva", "500", "--primary-kv", "4.16", "--secondary-kv", "0.48",
                  "--z-percent", "5", "--x-over-r", "5", "--class", "switchgear-lv", "--clearing-time-s", "0.1",
                  "--reduced-clearing-time-s", "0.1"],
                 work, env)
    assert "incident energy" in quick and "LIMITS OF USE" in quick
