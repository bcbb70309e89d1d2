"""Values that claim a document or a measurement but do not name it.

A ``datasheet``, ``measured`` or ``published`` basis says where a value comes from only
together with its source (the document, revision and table, the bench and the samples,
or the standard and its table).  A part
file whose ``provenance`` states such a basis with no source, or a value table that
states one with no source of its own, is listed by ``pinlib parts check`` with the other
problems of the file (file, line, field), as implausible values are.

A value that states neither basis nor source takes both from its file's ``provenance``
(:meth:`pinlib.library.values.Sourced.with_origin`): it is covered by the file's own
line, not listed again.
"""

from __future__ import annotations

from pinlib.core import messages as M
from pinlib.core.errors import LibraryError

__all__ = ["NEEDS_SOURCE", "unsourced"]

#: The bases that name a document, a measurement or a standard, and so need a source.
NEEDS_SOURCE = ("datasheet", "measured", "published")


def _blank(text) -> bool:
    return not (isinstance(text, str) and text.strip())


def unsourced(pf) -> list[LibraryError]:
    """The problems of one part file (a :class:`pinlib.library.loader.PartFile`): its
    ``provenance`` and each value table with a basis of :data:`NEEDS_SOURCE` and no
    source."""
    raw = pf.raw if isinstance(pf.raw, dict) else {}
    prov = raw.get("provenance")
    prov = prov if isinstance(prov, dict) else {}
    file_basis = prov.get("basis") if isinstance(prov.get("basis"), str) else "generic"
    out = []
    if file_basis in NEEDS_SOURCE and _blank(prov.get("source")):
        out.append(LibraryError(M.NO_SOURCE_FOR_PART.format(basis=file_basis), file=str(pf.path),
                                line=pf.line(("provenance", "source")),
                                field="provenance.source", value=prov.get("source"),
                                expected=M.SOURCE_OF_PART))
    for path, table in _value_tables(raw, ()):
        if "basis" not in table and "source" not in table:
            continue  # as its file says: the line above covers it
        basis = table.get("basis") if isinstance(table.get("basis"), str) else file_basis
        if basis in NEEDS_SOURCE and _blank(table.get("source")):
            field = ".".join(map(str, path))
            out.append(LibraryError(M.NO_SOURCE_FOR_VALUE.format(basis=basis),
                                    file=str(pf.path), line=pf.line(path), field=field,
                                    value=table.get("source"), expected=M.SOURCE_OF_VALUE))
    return out


def _value_tables(node, path: tuple):
    """(key path, table) of every ``{ value = ... }`` table below ``node``."""
    if isinstance(node, dict):
        if "value" in node and path:
            yield path, node
            return
        for key, item in node.items():
            if not path and key == "provenance":
                continue
            yield from _value_tables(item, path + (key,))
    elif isinstance(node, list):
        for i, item in enumerate(node):
            yield from _value_tables(item, path + (i,))
