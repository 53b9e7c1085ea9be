"""Copies the top-level schemas/ and templates/ into the built package.

They stay at the top of the repository (where editors and reviewers find them) and are
shipped inside the wheel as ``protolint/_data/`` so a plain ``pip install .`` works.
"""

import shutil
from pathlib import Path

from setuptools import setup
from setuptools.command.build_py import build_py


class BuildWithResources(build_py):
    def run(self) -> None:
        super().run()
        for folder in ("schemas", "templates"):
            source = Path(folder)
            if source.is_dir():
                shutil.copytree(source, Path(self.build_lib) / "protolint" / "_data" / folder, dirs_exist_ok=True)


setup(cmdclass={"build_py": BuildWithResources})
