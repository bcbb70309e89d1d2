"""Loading team part folders: what a broken or odd team file does to every command."""

from __future__ import annotations

import pytest

from pinlib.core.errors import LibraryError
from pinlib.library.loader import load_library
from tests.test_library import builtin, part, write  # noqa: F401 - its fixture


@pytest.fixture
def own(builtin):  # noqa: F811 - the fixture imported above
    """A built-in library of our own (tests/test_library.py's), its folder."""
    return builtin


@pytest.mark.parametrize("extends", ['["base"]', '{ id = "base" }'])
def test_an_extends_that_is_not_an_id_is_its_file_s_error_everywhere(own, tmp_path, extends):
    # invented test input: extends written as an array or a table once raised
    # "unhashable type" from Library.get (pinlib check, parts show)
    team = tmp_path / "team"
    f = write(team, "c.toml", part("c") + f"extends = {extends}\n")
    lib = load_library([team], lazy=True)
    with pytest.raises(LibraryError) as caught:
        lib.get("c", file="d.toml", line=3, field="bus[0].devices[0].part")
    err = caught.value
    assert (err.file, err.line, err.field) == (str(f), 5, "extends")
    assert "extends names a part id" in err.message
