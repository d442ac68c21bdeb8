"""Build hook: copy the demo casefile and the report templates into the wheel.

``casefiles/riverside/`` and ``report_templates/*.toml`` at the top of the
source tree are the one editable copy. When setuptools builds the package
(``pip wheel .``, ``pip install .``, pipx) this ``build_py`` step copies them
into ``forensic/_data/`` inside the build folder only, so the installed
package finds them with :mod:`importlib.resources` while the source tree
never holds a second copy. All metadata is in ``pyproject.toml``.
"""

from __future__ import annotations

import shutil
from pathlib import Path

from setuptools import setup
from setuptools.command.build_py import build_py

HERE = Path(__file__).resolve().parent

# (source in the tree, destination under forensic/_data/, files to take)
_DATA = (
    (HERE / "casefiles" / "riverside", "casefiles/riverside", "**/*"),
    (HERE / "report_templates", "report_templates", "*.toml"),
)


class build_py_with_data(build_py):  # noqa: N801 - setuptools command naming
    """``build_py`` that also copies the demo casefile and report templates into the package."""

    def run(self) -> None:
        super().run()
        if getattr(self, "editable_mode", False):
            return  # an editable install reads the source tree itself
        target = Path(self.build_lib) / "forensic" / "_data"
        for src, dest, pattern in _DATA:
            for path in sorted(src.glob(pattern)):
                if not path.is_file() or "__pycache__" in path.parts or path.suffix == ".pyc":
                    continue
                out = target / dest / path.relative_to(src)
                out.parent.mkdir(parents=True, exist_ok=True)
                shutil.copyfile(path, out)


setup(cmdclass={"build_py": build_py_with_data})
