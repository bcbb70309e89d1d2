"""Values that keep where they came from.

A value in a part file is either a plain string with its unit (``"8 pF"``) or a table
``{ value = "8 pF", basis = "datasheet", source = "rev C, table 7.5", typ = "5 pF" }``.
Either way it becomes a :class:`Sourced`: the SI value (a float, or a
:class:`~pinlib.core.quantity.Threshold` for levels that may follow the supply) with its
basis, its source, the typical value when one was given, whether pinlib derived it,
and which part file it was set in (for values inherited through ``extends``).
"""

from __future__ import annotations

from typing import Any

from pinlib.core import messages as M
from pinlib.core.errors import UnitError, cut
from pinlib.core.protocols import SPI_MODE_NUMBERS
from pinlib.core.quantity import Threshold, format_si, parse, parse_threshold, range_text
from pinlib.core.valueclass import value_class

__all__ = ["BASES", "Sourced", "StatedList", "sourced_parser", "threshold_parser",
           "modes_parser"]

#: How a value was obtained ("ibis": read or derived by arithmetic from an IBIS file;
#: "published": the limit a published standard sets for every part of its kind, quoted
#: as its source; "derived" is set by pinlib itself and stays last).
BASES = ("generic", "datasheet", "measured", "estimate", "ibis", "published", "derived")

#: The bases of a value that neither a datasheet, a measurement nor a published
#: standard stands behind (a class's typical value, an estimate).  A check whose limit
#: rests on one warns where it would fail (:func:`pinlib.model.result.soft_limit`).
SOFT_BASES = ("generic", "estimate")

_TABLE_KEYS = {"value", "basis", "source", "typ"}


@value_class(frozen=True)
class Sourced:
    """An SI value with its provenance.

    Attributes
    ----------
    value : float or Threshold
        The stored value: the guaranteed limit in the direction that hurts.
    unit : str
        Its SI unit (``"F"``, ``"V"``...).
    text : str
        What the file said.
    basis : str or None
        One of :data:`BASES`; None means "as the part's own provenance".
    source : str or None
        Where the number comes from (document, revision, table).
    typ : float or Threshold or None
        The typical value, kept for information only.
    origin : str or None
        The part id whose file set this value (differs from the part when inherited).
    origin_file : str or None
        The file of that part.
    file_filled : tuple of str
        ``("basis", "source")`` when the value states neither and takes both from the
        provenance of the file that set it (not of the part that inherits it).
    file_basis : str or None
        The basis of the file that set it (its provenance's), for a value that states a
        source of its own and no basis: what :attr:`rests_on` falls back to.
    """

    value: Any
    unit: str
    text: str = ""
    basis: str | None = None
    source: str | None = None
    typ: Any = None
    origin: str | None = None
    origin_file: str | None = None
    file_filled: tuple = ()
    file_basis: str | None = None

    @property
    def derived(self) -> bool:
        return self.basis == "derived"

    @property
    def rests_on(self) -> str | None:
        """The basis the value rests on: its own, else that of the file that set it
        (None for a value that was never in a part file, e.g. a test's)."""
        return self.basis or self.file_basis

    @property
    def soft(self) -> bool:
        """True when no datasheet, measurement or standard stands behind the value
        (:data:`SOFT_BASES`)."""
        return self.rests_on in SOFT_BASES

    def at(self, vdd=None):
        """The value as a number; a threshold is resolved at ``vdd``. [unit]"""
        if isinstance(self.value, Threshold):
            if vdd is None:
                if self.value.relative:
                    raise ValueError("a supply is needed to resolve a relative threshold")
                return self.value.offset
            return self.value.resolve(vdd)
        return self.value

    def with_origin(self, origin: str, *, file: str | None = None,
                    provenance: dict | None = None) -> Sourced:
        """The value stamped with the part (and file) that set it; a basis or source it
        does not state is taken from that file's ``provenance`` table."""
        if self.origin:
            return self
        changes: dict = {"origin": origin, "origin_file": file}
        if provenance is not None and self.basis is None and self.source is None:
            # a value that states nothing of its own is as its file says (a value with
            # its own source keeps it; its basis is still its file's, see file_filled)
            changes["basis"] = provenance.get("basis") or "generic"  # the format's default
            changes["source"] = provenance.get("source") or None
            changes["file_filled"] = ("basis", "source")
        elif provenance is not None and self.basis is None:
            changes["file_basis"] = provenance.get("basis") or "generic"
        # A copy of the instance dict with the origin set: dataclasses.replace (which
        # runs __init__ through the field list) is five times slower, and a library load
        # stamps every value of every part.
        stamped = object.__new__(type(self))
        stamped.__dict__.update(self.__dict__, **changes)
        return stamped

    def provenance_text(self) -> str:
        """``'adc-generic (adc-generic.toml), generic: typical values'``: the part and
        file that set the value, then its basis and source."""
        import os

        where = self.origin or ""
        if self.origin_file:
            where += f" ({os.path.basename(self.origin_file)})"
        bits = ": ".join(b for b in (self.basis, self.source) if b)
        return ", ".join(b for b in (where, bits) if b)

    def describe(self) -> str:
        """``'8 pF (datasheet: rev C, table 7.5)'``"""
        shown = str(self.value) if isinstance(self.value, Threshold) else format_si(
            self.value, self.unit)
        bits = [b for b in (self.basis, self.source) if b]
        return f"{shown} ({': '.join(bits)})" if bits else shown

    def to_json(self) -> dict:
        v = self.value
        out = {"text": self.text or str(v), "unit": self.unit}
        if isinstance(v, Threshold):
            out.update(scale=v.scale, offset=v.offset)
        else:
            out["value"] = v
        for k in ("basis", "source", "origin"):
            if getattr(self, k):
                out[k] = getattr(self, k)
        if self.typ is not None:
            out["typ"] = str(self.typ) if isinstance(self.typ, Threshold) else self.typ
        return out


class StatedList(tuple):
    """A list a part states (its SPI modes) that keeps, as :class:`Sourced` does, its
    own basis and source where the file gives them (``{ value = [0, 3], source = ...
    }``), else those of the file that set it; and the part whose file that is (a part
    that extends a class and does not restate the list cites the class's file).

    Attributes
    ----------
    origin : str or None
        The part id whose file set the list.
    basis, source : str or None
        Its own, or that file's provenance.
    """

    origin: str | None = None
    basis: str | None = None
    source: str | None = None

    def with_origin(self, origin: str, *, file: str | None = None,
                    provenance: dict | None = None) -> StatedList:
        """The list stamped with the part that set it and its file's provenance."""
        if self.origin:
            return self
        out = StatedList(self)
        out.origin = origin
        prov = provenance or {}
        if self.basis is None and self.source is None:
            out.basis = prov.get("basis") or "generic"
            out.source = prov.get("source") or None
        else:  # its own; a basis it does not state is its file's, as a Sourced's
            out.basis = self.basis or prov.get("basis") or "generic"
            out.source = self.source
        return out

    @property
    def soft(self) -> bool:
        """As :attr:`Sourced.soft`."""
        return self.basis in SOFT_BASES

    def cited(self, field: str) -> str:
        """``'nor-flash-spi spi_modes: typical of the class'``: the part that set it, the
        field, and its file's source (or basis), as a timing value's source reads."""
        said = self.source or self.basis
        return f"{self.origin} {field}" + (f": {said}" if said else "")


def modes_parser(raw, name=None):
    """A record converter: a list of SPI modes (whole numbers 0 to 3, each once, at least
    one), plain or as ``{ value = [...], basis = ..., source = ... }`` ->
    :class:`StatedList`."""
    if isinstance(raw, StatedList):
        return raw
    field = _field_name(name)
    basis = source = None
    if isinstance(raw, dict):
        if "typ" in raw:  # a typical list of modes means nothing
            raise UnitError(M.VALUE_TABLE_UNKNOWN_KEY.format(key="typ"), field=field,
                            expected="only value, basis, source")
        raw, basis, source, _ = _split_table(raw, field)
    if not isinstance(raw, (list, tuple)) or not raw:
        raise UnitError(M.SPI_MODES_BAD_LIST, field=field, value=raw,
                        expected="e.g. [0, 3]")
    for i, m in enumerate(raw):
        if isinstance(m, bool) or not isinstance(m, int) or m not in SPI_MODE_NUMBERS:
            raise UnitError(M.SPI_MODE_NOT_0_TO_3, field=f"{field}[{i}]" if field else None,
                            value=m, expected="0, 1, 2 or 3")
    if len(set(raw)) != len(raw):
        raise UnitError(M.SPI_MODES_BAD_LIST, field=field, value=list(raw),
                        expected="e.g. [0, 3]")
    out = StatedList(sorted(raw))
    out.basis, out.source = basis, source
    return out


def _split_table(raw, field):
    """Return (text, basis, source, typ_text) from a plain value or a provenance table."""
    if isinstance(raw, dict):
        unknown = set(raw) - _TABLE_KEYS
        if unknown:
            raise UnitError(M.VALUE_TABLE_UNKNOWN_KEY.format(key=cut(sorted(unknown)[0])),
                            field=field,
                            expected="only value, basis, source, typ")
        if "value" not in raw:
            raise UnitError(M.VALUE_TABLE_WITHOUT_VALUE, field=field,
                            expected="{ value = \"...\", basis = \"...\", source = \"...\" }")
        basis = raw.get("basis")
        if basis is not None and basis not in BASES[:-1]:
            raise UnitError(M.UNKNOWN_BASIS, field=f"{field}.basis" if field else "basis",
                            value=basis, expected="one of " + ", ".join(BASES[:-1]))
        source = raw.get("source")
        if source is not None and not isinstance(source, str):
            raise UnitError(M.SOURCE_NOT_TEXT, field=f"{field}.source", value=source)
        return raw["value"], basis, source, raw.get("typ")
    return raw, None, None, None


def sourced_parser(unit: str, lo: float | None = None, hi: float | None = None,
                   *, signed: bool = False, low_problem: str | None = None):
    """A record converter (:class:`pinlib.core.records.Convert`): plain value or provenance
    table -> :class:`Sourced`.

    ``lo``/``hi`` are the field's allowed range in SI (a bare ``"4k7"`` for a
    capacitance must not pass as 4.7 kF); values outside them are refused with the range
    in the message, per-length ranges per metre as the format's table states them;
    ``low_problem``, when given, says why a positive value below ``lo`` is refused (a
    delay per length faster than light) instead of the bare range.
    """

    def check(x, field, text):
        # the value is quoted as written ("1e300 pF", not its SI form "1e288 F")
        if not signed and x < 0:
            raise UnitError(M.NEGATIVE_VALUE, field=field, value=str(text),
                            expected=range_text(max(lo or 0.0, 0.0), hi, unit, per="m"))
        if (lo is not None and x < lo) or (hi is not None and x > hi):
            # the range as the format's table states it (docs/formats/part.md): per
            # metre for a cable's per-length values
            low = lo is not None and x < lo
            raise UnitError(low_problem if low and low_problem else M.OUTSIDE_RANGE,
                            field=field, value=str(text),
                            expected=range_text(lo, hi, unit, per="m"))
        return x

    def validate(raw, name=None):
        if isinstance(raw, Sourced):
            return raw
        field = _field_name(name)
        text, basis, source, typ = _split_table(raw, field)
        value = check(parse(text, unit, field=field), field, text)
        typ_field = f"{field}.typ" if field else None
        typ_v = None if typ is None else check(parse(typ, unit, field=typ_field), typ_field, typ)
        return Sourced(value, unit, str(text), basis, source, typ_v)

    return validate


def threshold_parser(lo: float = -50.0, hi: float = 50.0):
    """A record converter for levels: ``"0.7 VDD"``, ``"VDD - 0.4 V"``, ``"2 V"``."""

    def validate(raw, name=None):
        if isinstance(raw, Sourced):
            return raw
        field = _field_name(name)
        text, basis, source, typ = _split_table(raw, field)
        th = level(text, field)
        typ_v = None if typ is None else level(typ, f"{field}.typ" if field else None)
        return Sourced(th, "V", str(text), basis, source, typ_v)

    def level(text, field):
        # a typical level is held to the same range as the limit beside it
        th = parse_threshold(text, field=field)
        if not (-2.0 <= th.scale <= 2.0 and lo <= th.offset <= hi):
            raise UnitError(M.OUTSIDE_RANGE, field=field, value=text,
                            expected=M.LEVEL_RANGE.format(lo=f"{lo:g}", hi=f"{hi:g}"))
        return th

    return validate


def _field_name(name) -> str | None:
    return name if isinstance(name, str) else None
