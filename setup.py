"""Packaging step that pyproject.toml cannot declare: a built wheel carries the top-level
``resources/`` folder inside the package as ``hunchbook/_resources``, where
:mod:`hunchbook.resources` finds it. Editable installs read ``resources/`` in place."""

from pathlib import Path

from setuptools import setup
from setuptools.command.build_py import build_py


class BuildWithResources(build_py):
    """``build_py`` that also copies ``resources/`` into the built package."""

    def run(self) -> None:
        """Build the package, then add the resources (not for an editable install)."""
        super().run()
        if not self.editable_mode:
            self.copy_tree("resources", str(Path(self.build_lib, "hunchbook", "_resources")))


setup(cmdclass={"build_py": BuildWithResources})
