"""The built wheel works on its own: installed in a fresh venv, run from outside the source tree.

A wheel is built from a copy of the files a release ships (so the source
tree gets no ``build/`` folder), installed into a temporary venv that sees
the machine's packages (``--system-site-packages``: the dependencies need
not download) but not the source tree, and ``forensic demo`` and
``forensic report`` are run there from a temporary working folder.
The check is the Python Packaging User Guide's advice to test the built
distribution, not the checkout ("Packaging Python Projects", common practice).
"""

from __future__ import annotations

import os
import shutil
import subprocess
import sys
import tomllib
import zipfile
from pathlib import Path

import pytest

import forensic

ROOT = Path(__file__).resolve().parent.parent
_SHIPPED = ("pyproject.toml", "setup.py", "MANIFEST.in", "README.md", "LICENSE", "CHANGELOG.md",
            "forensic", "casefiles", "report_templates")


def _run(args, cwd, env=None, timeout=600):
    proc = subprocess.run(args, cwd=cwd, env=env, capture_output=True, text=True, timeout=timeout)
    assert proc.returncode == 0, f"{args} failed ({proc.returncode}):\n{proc.stdout}\n{proc.stderr}"
    return proc


@pytest.fixture(scope="module")
def wheel(tmp_path_factory) -> Path:
    src = tmp_path_factory.mktemp("src")
    for name in _SHIPPED:
        path = ROOT / name
        if path.is_dir():
            shutil.copytree(path, src / name, ignore=shutil.ignore_patterns("__pycache__", "*.pyc", "_data"))
        else:
            shutil.copy2(path, src / name)
    dist = tmp_path_factory.mktemp("dist")
    _run([sys.executable, "-m", "pip", "wheel", "--no-deps", "-q", "-w", str(dist), str(src)], cwd=src)
    (built,) = dist.glob("forensic-*.whl")
    return built


def test_wheel_carries_the_demo_and_the_templates_and_one_version(wheel):
    names = set(zipfile.ZipFile(wheel).namelist())
    # The package data is built from the editable sources: every demo file and template is in the wheel.
    demo = ROOT / "casefiles" / "riverside"
    for path in demo.rglob("*"):
        if path.is_file() and "__pycache__" not in path.parts:
            assert f"forensic/_data/casefiles/riverside/{path.relative_to(demo).as_posix()}" in names
    for path in (ROOT / "report_templates").glob("*.toml"):
        assert f"forensic/_data/report_templates/{path.name}" in names
    assert "forensic/py.typed" in names
    # One version: the wheel's name and metadata carry forensic.__version__, and
    # pyproject.toml declares the version dynamic instead of spelling it again.
    assert wheel.name.startswith(f"forensic-{forensic.__version__}-")
    project = tomllib.loads((ROOT / "pyproject.toml").read_text())["project"]
    assert "version" not in project and project["dynamic"] == ["version"]
    meta = next(n for n in names if n.endswith(".dist-info/METADATA"))
    text = zipfile.ZipFile(wheel).read(meta).decode()
    assert f"Version: {forensic.__version__}\n" in text
    assert "Classifier: License :: OSI Approved :: MIT License" in text
    assert "Project-URL: Changelog" in text


def test_wheel_in_a_fresh_venv_runs_the_demo_and_the_report(wheel, tmp_path):
    venv = tmp_path / "venv"
    _run([sys.executable, "-m", "venv", "--system-site-packages", str(venv)], cwd=tmp_path)
    bindir = venv / ("Scripts" if os.name == "nt" else "bin")
    py = bindir / "python"
    _run([str(py), "-m", "pip", "install", "-q", "--no-deps", "--no-index", str(wheel)], cwd=tmp_path)
    work = tmp_path / "work"
    work.mkdir()
    env = {k: v for k, v in os.environ.items() if k not in ("PYTHONPATH", "PYTHONHOME")}
    # The installed package, not the source tree, is the one imported.
    where = _run([str(py), "-c", "import forensic; print(forensic.__file__)"], cwd=work, env=env).stdout.strip()
    assert Path(where).resolve().is_relative_to(venv.resolve()), where
    exe = str(bindir / "forensic")
    out = _run([exe, "demo", "--out", "demo"], cwd=work, env=env).stdout
    assert "Demo casefile copied to demo/riverside" in out
    assert (work / "demo" / "riverside" / "casefile.toml").is_file()
    assert (work / "demo" / "riverside-full.pdf").read_bytes().startswith(b"%PDF-")
    # The copied demo is the same bytes as the source tree's editable copy.
    src = ROOT / "casefiles" / "riverside" / "casefile.toml"
    assert (work / "demo" / "riverside" / "casefile.toml").read_bytes() == src.read_bytes()
    rep = _run([exe, "report", "demo/riverside", "--template", "monthly", "--out", "m.pdf"], cwd=work, env=env)
    assert (work / "m.pdf").read_bytes().startswith(b"%PDF-")
    assert "wrote m.pdf" in rep.stdout + rep.stderr
    helped = _run([exe, "report", "--help"], cwd=work, env=env).stdout
    assert "full, monthly" in helped  # the shipped templates are found by name once installed
