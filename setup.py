"""Packaging layout that pyproject.toml cannot express (the metadata is in pyproject.toml).

The wheel carries, besides the code:

* ``pinlib/devices/``: the built-in library of part classes (package data);
* ``pinlib/workbooks/``: the demo design and the Jupyter workbooks, taken from the
  top-level ``workbooks/`` folder, which stays the source of truth (nbval runs the
  workbooks there).  ``pinlib demo`` copies them out of the installed package; in a
  checkout (the editable install) it reads ``workbooks/`` itself.
"""

from setuptools import find_packages, setup

setup(
    packages=[*find_packages(include=["pinlib", "pinlib.*"]), "pinlib.workbooks"],
    package_dir={"pinlib.workbooks": "workbooks"},
    package_data={
        "pinlib": ["devices/*/*.toml", "model/design.schema.json"],
        "pinlib.workbooks": ["*.ipynb", "designs/*.toml"],
    },
    include_package_data=False,
)
