"""``pinlib parts``: list, show, create, record into and check the parts library.

The library modules are imported inside each action, so that
``pinlib --help`` and the other commands do not pay for them.
"""

from __future__ import annotations

import argparse
import json
import os
import sys
from pathlib import Path

from pinlib.cli import SUMMARIES
from pinlib.cli.commands import partscheck, partsimport, partsusedby
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M
from pinlib.core import nearby
from pinlib.core.errors import InputError
from pinlib.core.labels import counted
from pinlib.present.terminal import fitted, fitted_command
from pinlib.present.terminal import shown_path as _rel

__all__ = ["add_parser", "run"]

HELP = SUMMARIES["parts"]

EPILOG = f"""\
examples:
  pinlib parts list --function i2c-sda --supply 3.3V
  pinlib parts show eeprom-i2c
  pinlib parts new eeprom-acme --from eeprom-i2c --into parts
  pinlib parts record eeprom-acme sda.c_in "6 pF" --source "rev C, table 7.5"
  pinlib parts check parts
  pinlib parts schema --output part.schema.json

Team folders come from PINLIB_LIBRARY (separated by '{os.pathsep}') and --library; a team part
with the id of a built-in part overrides it.
"""

_EXAMPLES = {
    "list": """\
examples:
  pinlib parts list
  pinlib parts list --category memory --supply 1.8V
  pinlib parts list --function spi-sclk --json

An abstract class (meant to be extended, not placed) has a '*' after its id, which
a line under the table explains, at any width. A team part that overrides a built-in
one is marked 'team, overrides built-in' in the kind column; when that column does
not fit the terminal, a line under the table names the overrides.
""",
    "show": """\
examples:
  pinlib parts show eeprom-i2c
  pinlib parts show eeprom-acme --library parts --json

Each value is shown with its basis and source, and the part (and file) it was
inherited from when that is not the part itself.
""",
    "new": """\
examples:
  pinlib parts new eeprom-acme --from eeprom-i2c --into parts
  pinlib parts new adc-x --from i2c-peripheral --title "12-bit ADC, I2C" \\
      --library parts

Without --into the part goes into the first --library folder, else the first
PINLIB_LIBRARY folder.
""",
    "record": """\
examples:
  pinlib parts record eeprom-acme sda.c_in "6 pF" --source "rev C, table 7.5"
  pinlib parts record eeprom-acme timing.f_max "1 MHz" --source "rev C, p. 4"
  pinlib parts record eeprom-acme supply.min "1.6 V" --basis measured \\
      --source "lab, 3 samples"
  pinlib parts record eeprom-acme sda.v_ol "0.4 V" --typ "0.15 V" \\
      --source "rev C, table 7.5"
  pinlib parts record eeprom-acme sda.v_ih "0.7 VDD" --basis published \\
      --source "I2C-bus specification UM10204 rev. 6, table 9, VIH min"

FIELD is PIN.FIELD (sda.c_in), timing.FIELD, supply.min|max, sides.a.PIN.FIELD...
A bridging part (translator, repeater) has its pins per side: sides.a.sda.c_in.

A negative VALUE is written as it is ("-0.3 V", "-300mV"); one that starts with a
minus and no digit goes after '--', every option before it:
  pinlib parts record X sda.v_il "-0.3 V" --source S
  pinlib parts record --source S X -- sda.v_il "-VDD + 3.6 V"

The file keeps its comments and layout; a value that does not validate is refused and
the file is left as it was. Built-in parts are never written: make a team part first.
""",
    "import": partsimport.EXAMPLES,
    "check": """\
examples:
  pinlib parts check         # the whole merged library
  pinlib parts check parts   # every file of one folder, against the library
  pinlib parts check parts/eeprom-acme.toml   # one part file of that folder

Exit code 0 when every file is valid, 1 when any problem is found.
""",
    "used-by": """\
examples:
  pinlib parts used-by eeprom-i2c boards/*.toml
  pinlib parts used-by i2c-peripheral   # every design below this folder
""",
    "schema": """\
examples:
  pinlib parts schema --output part.schema.json
  pinlib parts schema | head

Point an editor with TOML schema support at the file to validate and complete part
files (for example a '#:schema ./part.schema.json' first line, where supported).
""",
}


def add_parser(subparsers) -> None:
    from pinlib.library.record import RECORD_BASES

    common = argparse.ArgumentParser(add_help=False)
    common.add_argument("--library", metavar="DIR", action="append", default=[],
                        help="a team library folder (repeatable; after PINLIB_LIBRARY)")
    parser = subparsers.add_parser("parts", help=HELP,
                                   description=HELP[:1].upper() + HELP[1:] + ".",
                                   epilog=EPILOG,
                                   formatter_class=HelpLayout)
    sub = parser.add_subparsers(dest="parts_command", metavar="ACTION")

    def action(name, help_text, run):
        p = sub.add_parser(name, help=help_text, description=help_text[0].upper() + help_text[1:]
                           + ".", epilog=_EXAMPLES[name], parents=[common],
                           formatter_class=HelpLayout)
        p.set_defaults(run=run)
        return p

    p = action("list", "list the parts of the library", _run_list)
    p.add_argument("--category", help="only parts of this category")
    p.add_argument("--function", help="only parts with a pin of this function (e.g. i2c-sda)")
    p.add_argument("--supply", metavar="VOLTAGE",
                   help="only parts whose supply range contains this voltage (e.g. 3.3V)")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")

    p = action("show", "show a resolved part with the provenance of every value", _run_show)
    p.add_argument("id", metavar="ID", help="the part id")
    p.add_argument("--json", action="store_true", help="print JSON instead of a table")

    p = action("new", "create a team part that extends a class", _run_new)
    p.add_argument("id", metavar="ID", help="the new part's id ([a-z0-9-]+)")
    p.add_argument("--from", dest="from_class", metavar="CLASS", required=True,
                   help="the part or class to extend")
    p.add_argument("--into", metavar="FOLDER", help="the team library folder to write into")
    p.add_argument("--title", help="the new part's title (default: the class's)")
    p.add_argument("--source", default="",
                   help="the part's document (e.g. 'datasheet rev C, 2024-03'); without "
                        "it the file asks for one in a comment")

    p = action("record", "record one value with its source into a team part", _run_record)
    p.add_argument("id", metavar="ID", help="the team part")
    p.add_argument("field", metavar="FIELD", help="PIN.FIELD, timing.FIELD, supply.min ...")
    p.add_argument("value", metavar="VALUE", help="the value with its unit, e.g. '6 pF'")
    p.add_argument("--source", required=True, help="document, revision, table or page")
    p.add_argument("--basis", choices=list(RECORD_BASES), default="datasheet",
                   help="how the value was obtained (default: datasheet; published: a "
                        "standard's limit for every part of its kind)")
    p.add_argument("--typ", help="a typical value to keep beside the limit")

    p = action("import", "list an IBIS file, or write a team part from one of its components",
               _run_import)
    partsimport.add_arguments(p)

    p = action("check", "check part files and report every problem", _run_check)
    p.add_argument("folder", metavar="FOLDER", nargs="?",
                   help="check the files of this folder, or one part file (default: the "
                        "whole library)")
    p.add_argument("--json", action="store_true", help="print the problems as JSON")

    p = action("schema", "print the JSON Schema of part files", _run_schema)
    p.add_argument("--output", metavar="FILE", help="write it to FILE instead")

    p = action("used-by", "list every design position that uses a part or a class it "
                          "extends", _run_used_by)
    p.add_argument("id", metavar="ID", help="the part or class id")
    p.add_argument("designs", metavar="DESIGN", nargs="*",
                   help="design files or glob patterns (default: '**/*.toml' designs "
                        "below the current folder)")
    p.add_argument("--json", action="store_true", help="print JSON instead of lines")

    parser.set_defaults(run=lambda args: _no_action(parser))


def run(args) -> int:
    """Run the parsed ``pinlib parts`` command; return its exit code."""
    return args.run(args)


def _no_action(parser) -> int:
    parser.print_help()
    return 2


# --- helpers ---------------------------------------------------------------------------

def _load(args, extra=()):
    from pinlib.library.folders import require_folders
    from pinlib.library.loader import load_library

    require_folders(args.library)  # a folder it was told to read: exit 2, naming who said so
    return load_library(list(args.library) + list(extra))


def _warn_problems(lib) -> None:
    if lib.problems:
        text = counted(M.LIBRARY_HAS_PROBLEMS, len(lib.problems))
        # a team file that overrides a built-in id and does not load takes the built-in
        # out with it, and every part that extends that id: say which
        for pid in lib.overrides:
            if pid not in lib.parts:
                text += "; " + M.OVERRIDE_HIDES_BUILTIN.format(id=pid)
        _warn("pinlib: warning: " + text)


def _choice(value, choices, field):
    if value is not None and value not in choices:
        raise InputError(M.NOT_ALLOWED_VALUE, field=field, value=value,
                         expected="one of " + ", ".join(choices),
                         hint=nearby.closest_hint(value, choices, cutoff=0.4))


def _supplies(part) -> list[tuple[str, object]]:
    """(label, Supply) pairs: the part's own, else one per side of a bridge."""
    if part.supply is not None:
        return [("", part.supply)]
    return [(f"{name} ", side.supply) for name, side in sorted(part.sides.items())
            if side.supply is not None]


def _range_text(supply) -> str:
    from pinlib.core.quantity import format_si

    lo, hi = format_si(supply.min.value, "V"), format_si(supply.max.value, "V")
    return f"{lo.removesuffix(' V')}-{hi}" if lo.endswith(" V") and hi.endswith(" V") else \
        f"{lo}-{hi}"


def _kind(lib, pid) -> str:
    pf = lib.files[pid]
    text = "built-in" if pf.builtin else (
        "team, overrides built-in" if pid in lib.overrides else "team")
    if lib.parts[pid].abstract:
        text += ", abstract"
    return text


def _table(rows: list[list[str]], header: list[str], keep: int = 2,
           left_out: dict[str, str | list[str]] | None = None,
           least: dict[str, int] | None = None, drop: list[str] | None = None,
           key: str | None = None) -> str:
    """The table fitted to the terminal's width (COLUMNS; piped output whole): columns that do not
    fit are left out and named; a long cell wraps inside its column.  ``left_out``: a line
    (or lines, each wrapped with its rest indented) to print for a column when it is left
    out (what it would have told).  ``least`` and ``drop``, by column title: the
    :func:`~pinlib.core.texttable.fit_table` options.  ``key``: a line right under the
    table at any width (what a mark in it means)."""
    from pinlib.core.texttable import fit_table
    from pinlib.present.terminal import table_width, wrap

    cols = table_width()
    lines, dropped = fit_table(
        header, rows, cols, keep=keep, rule=True,
        least={header.index(k): v for k, v in (least or {}).items()},
        drop=None if drop is None else [header.index(k) for k in drop])
    if key:
        lines += wrap(key, cols, subsequent="  ") if cols else [key]
    for column, note in (left_out or {}).items():
        if column in dropped and note:
            if isinstance(note, str):
                lines += wrap(note, cols, subsequent="")
            else:
                for line in note:
                    lines += wrap(line, cols)
    if dropped:
        lines += wrap(M.COLUMNS_LEFT_OUT.format(columns=", ".join(dropped)), cols, subsequent="")
    return "\n".join(lines)


# --- list ------------------------------------------------------------------------------

#: The narrowest the title column of 'parts list' wraps to: a phrase a line.
_TITLE_WIDTH = 24
#: After an abstract class's id in 'parts list' (M.ABSTRACT_MARKED says what it means).
_ABSTRACT_MARK = " *"


def _run_list(args) -> int:
    from pinlib.core.quantity import parse
    from pinlib.library.schema import CATEGORIES, FUNCTIONS

    _choice(args.category, CATEGORIES, "--category")
    _choice(args.function, FUNCTIONS, "--function")
    volts = parse(args.supply, "V", field="--supply") if args.supply is not None else None
    lib = _load(args)
    _warn_problems(lib)
    chosen = []
    for pid in sorted(lib.parts):
        part = lib.parts[pid]
        if args.category and part.category != args.category:
            continue
        if args.function and args.function not in part.functions():
            continue
        if volts is not None and not any(s.min.value <= volts <= s.max.value
                                         for _, s in _supplies(part)):
            continue
        chosen.append(part)
    if args.json:
        out = []
        for part in chosen:
            out.append({
                "id": part.id, "title": part.title, "category": part.category,
                "abstract": part.abstract,
                "supply": [{"side": label.strip() or None, "min": s.min.value,
                            "max": s.max.value, "unit": "V"} for label, s in _supplies(part)],
                "functions": sorted(part.functions()),
                "file": str(lib.files[part.id].path),
                "builtin": lib.files[part.id].builtin,
                "overrides": str(lib.overrides[part.id]) if part.id in lib.overrides else None,
            })
        print(json.dumps(out, indent=2, ensure_ascii=False))
        return 0
    if not chosen:
        print("no part matches" if lib.parts else "the library is empty")
        return 0
    # an abstract class is marked beside its id, the one column always shown: it cannot be
    # placed, and at 80 columns the kind column that says so is left out
    rows = [[p.id + (_ABSTRACT_MARK if p.abstract else ""), p.category,
             ", ".join(label + _range_text(s) for label, s in _supplies(p)) or "-",
             ", ".join(sorted(p.functions())) or "-", _kind(lib, p.id), p.title]
            for p in chosen]
    overrides = [p.id for p in chosen if p.id in lib.overrides]
    note = M.OVERRIDES_LEFT_OUT.format(ids=", ".join(overrides)) if overrides else None
    # the title is kept, wrapped, and the codes beside it give way: kind first, then the
    # pin functions (--function filters by them), the supply, the category
    print(_table(rows, ["id", "category", "supply", "pin functions", "kind", "title"],
                 left_out={"kind": note},
                 least={"title": _TITLE_WIDTH, "pin functions": 16, "supply": 13, "kind": 9},
                 drop=["kind", "pin functions", "supply", "category"],
                 key=M.ABSTRACT_MARKED if any(p.abstract for p in chosen) else None))
    return 0


# --- show ------------------------------------------------------------------------------

def _walk(obj, path=()):
    """Yield (path, Sourced) for every value of a part, and (path, x) for plain fields."""
    from pinlib.core.records import Record
    from pinlib.library.values import Sourced, StatedList

    if isinstance(obj, Sourced):
        yield path, obj
    elif isinstance(obj, StatedList):  # one setting, as the file writes it: [0, 3]
        yield path, list(obj)
    elif isinstance(obj, Record):
        for name in type(obj).fields():
            value = getattr(obj, name)
            if value is None or (isinstance(value, (dict, tuple)) and not value):
                continue
            yield from _walk(value, path + (name,))
    elif isinstance(obj, dict):
        for key, value in obj.items():
            yield from _walk(value, path + (str(key),))
    elif isinstance(obj, tuple):
        for i, value in enumerate(obj):
            yield from _walk(value, path + (i,))
    else:
        yield path, obj


_HEADER_FIELDS = {"format", "id", "title", "category", "extends", "abstract", "description"}


def _show_data(lib, pid) -> dict:
    from pinlib.core.quantity import Threshold
    from pinlib.core.tomlfile import dotted
    from pinlib.library.values import Sourced

    part = lib.get(pid)
    values, attributes = [], []
    for path, item in _walk(part):
        if path and path[0] in _HEADER_FIELDS | {"provenance"}:
            continue
        if not isinstance(item, Sourced):
            attributes.append({"field": dotted(path), "value": item})
            continue
        origin = item.origin or pid
        # the loader fills a basis or source the value does not state from the file that
        # set it (the class it was inherited from, not this part): the basis it rests on
        # is its own, else that file's (the format's default, generic, when the file's
        # provenance names none), never the basis of the part shown (Sourced.rests_on;
        # a value the loader never stamped is the part's own)
        entry = {
            "field": dotted(path),
            "text": item.text or str(item.value),
            "unit": item.unit,
            "basis": item.rests_on or part.provenance.basis,
            "basis_from_part": item.basis is None or "basis" in item.file_filled,
            "source": item.source,
            "typ": None if item.typ is None else (
                str(item.typ) if isinstance(item.typ, Threshold) else item.typ),
            "derived": item.derived,
            "origin": origin,
            "origin_file": str(lib.files[origin].path) if origin in lib.files else None,
            "inherited": origin != pid,
        }
        if isinstance(item.value, Threshold):
            entry.update(scale=item.value.scale, offset=item.value.offset)
        else:
            entry["value"] = item.value
        values.append(entry)
    from pinlib.library.derive import derived_values

    for field, item in derived_values(part).items():
        values.append({
            "field": field, "text": item.text, "unit": item.unit, "value": item.value,
            "basis": "derived", "basis_from_part": False, "source": item.source,
            "typ": None, "derived": True, "origin": pid,
            "origin_file": str(lib.files[pid].path), "inherited": False,
        })
    prov = part.provenance
    return {
        "id": part.id, "title": part.title, "category": part.category,
        "abstract": part.abstract, "description": part.description,
        "file": str(lib.files[pid].path), "builtin": lib.files[pid].builtin,
        "overrides": str(lib.overrides[pid]) if pid in lib.overrides else None,
        "chain": [{"id": c, "file": str(lib.files[c].path)} for c in lib.chain(pid)],
        "provenance": {"basis": prov.basis, "source": prov.source,
                       "recorded": prov.recorded.isoformat() if prov.recorded else None,
                       "by": prov.by},
        "attributes": attributes,
        "values": values,
    }


def _typ_text(entry) -> str:
    from pinlib.core.quantity import format_si

    typ = entry["typ"]
    if typ is None:
        return ""
    return typ if isinstance(typ, str) else format_si(typ, entry["unit"])


def _refuse_unknown(lib, pid: str, field: str, args) -> None:
    """An id no file of the library holds is an error naming the argument that gave it,
    the closest ids and where team parts were looked for (a shell without
    PINLIB_LIBRARY reads like a misspelt id otherwise)."""
    if pid in lib.files:
        return
    try:
        lib.get(pid)
    except InputError as err:
        if lib.problems_of(pid):
            raise  # a file holds it and cannot be read: that file's line and problem
        from pinlib.library.folders import team_folders_hint

        raise InputError(err.problem, field=field, value=pid, hint="; ".join(
            h for h in (err.hint, team_folders_hint(args.library)) if h)) from None


def _run_show(args) -> int:
    from pinlib.core.quantity import format_si
    from pinlib.present.terminal import width, wrap

    lib = _load(args)
    _refuse_unknown(lib, args.id, "ID", args)
    data = _show_data(lib, args.id)
    if args.json:
        print(json.dumps(data, indent=2, ensure_ascii=False))
        return 0
    cols = width()
    print("\n".join(wrap(f"{data['id']}: {data['title']}", cols)))
    facts = [f"category {data['category']}"]
    if data["abstract"]:
        facts.append("abstract class (extend it; not placed on a board)")
    facts.append("built-in" if data["builtin"] else "team part")
    if data["overrides"]:
        facts.append(f"overrides the built-in {_rel(data['overrides'])}")
    print("\n".join(wrap("; ".join(facts), cols, "  ")))
    print("\n".join(wrap("file: " + _rel(data["file"]), cols, "  ")))
    if len(data["chain"]) > 1:
        print("\n".join(wrap("extends: " + " <- ".join(c["id"] for c in data["chain"]),
                             cols, "  ")))
    prov = data["provenance"]
    bits = [prov["basis"]] + [b for b in (prov["source"], prov["recorded"] and
                                          f"recorded {prov['recorded']}", prov["by"]) if b]
    print("\n".join(wrap("provenance: " + ", ".join(bits), cols, "  ")))
    if data["description"]:
        print("\n".join(wrap(data["description"], cols, "  ", "")))
    if data["attributes"]:
        print()
        print(_table([[a["field"], str(a["value"]).lower() if isinstance(a["value"], bool)
                       else str(a["value"])] for a in data["attributes"]], ["field", "setting"]))
    print()
    rows = []
    inherited: dict[str, list[str]] = {}  # "ID (file)" -> the fields taken from it
    for v in data["values"]:
        shown = v["text"]
        unit = v["unit"]
        written_in_unit = (f"{unit.split('/')[0]}/" in shown if "/" in unit
                           else shown.rstrip().endswith(unit))
        if "value" in v and not written_in_unit:
            # '4k7', '10 ohm': add the value as pinlib reads it
            si = format_si(v["value"], v["unit"])
            if si.replace(" ", "") != shown.replace(" ", ""):
                shown = f"{shown} ({si})"
        basis = v["basis"] or ""
        if v["basis_from_part"] and basis:
            basis += " (part)"
        if v["derived"]:
            shown += "  [derived]"
        origin = "" if not v["inherited"] else f"{v['origin']} ({_rel(v['origin_file'])})"
        if origin:
            inherited.setdefault(origin, []).append(v["field"])
        rows.append([v["field"], shown, _typ_text(v), basis, v["source"] or "", origin])
    if rows:
        # too narrow for the column: which values the part takes from which class,
        # below the table, the nearest class first (what sets a team part apart)
        depth = {c["id"]: i for i, c in enumerate(data.get("chain", []))}
        note = [f"inherited from {o}: {', '.join(f)}" for o, f in
                sorted(inherited.items(), key=lambda item: depth.get(item[0].split()[0], 0))]
        print(_table(rows, ["field", "value", "typ", "basis", "source", "inherited from"],
                     keep=5, left_out={"inherited from": note}))
    else:
        print("(no values)")
    print()
    print("\n".join(wrap("basis '(part)': the value states no basis of its own and takes the "
                         "provenance of the file that set it (this part's, or the class's it "
                         "inherits from); so does its source when it states none.", cols,
                         subsequent="")))
    return 0


# --- new -------------------------------------------------------------------------------

def _default_folder(args) -> Path:
    if args.library:
        return Path(args.library[0])
    env = [p for p in os.environ.get("PINLIB_LIBRARY", "").split(os.pathsep) if p]
    if env:
        return Path(env[0])
    raise InputError(M.NO_FOLDER_FOR_NEW_PART, field="--into",
                     hint="give --into FOLDER, or a --library folder or PINLIB_LIBRARY")


def _run_new(args) -> int:
    from pinlib.library.record import check_title, field_example, new_part

    check_title(args.title, "--title")
    folder = Path(args.into) if args.into else _default_folder(args)
    lib = _load(args)
    _refuse_unknown(lib, args.from_class, "--from", args)
    path = new_part(lib, args.id, args.from_class, folder, title=args.title,
                    source=args.source)
    print(fitted(f"created {_rel(path)} (extends {args.from_class})"))
    if not args.source.strip():
        print(fitted(f"note: no --source: name the datasheet in the provenance line of "
                     f"{_rel(path)} (pinlib parts check lists it until then)", sys.stderr),
              file=sys.stderr)
    known = [f.resolve() for f in lib.folders]
    if folder.resolve() not in known:
        from pinlib.library.folders import not_a_library_yet_note

        print(fitted(not_a_library_yet_note(str(folder), _rel(folder)), sys.stderr),
              file=sys.stderr)
    # the folders this command was told to read (the class may live in one), then the
    # new part's own where the library does not read it yet
    given = [f"--library {f}" for f in args.library]
    if folder.resolve() not in known:
        given.append(f"--library {folder}")
    print(fitted_command("next:", ["pinlib", "parts", "record", args.id,
                                   field_example(lib.get(args.from_class)),
                                   '"VALUE"', '--source "..."'] + given))
    return 0


# --- record ----------------------------------------------------------------------------

def _run_record(args) -> int:
    from pinlib.library.record import one_line, record_value, resolve_field

    lib = _load(args)
    _refuse_unknown(lib, args.id, "ID", args)
    keys, _ = resolve_field(lib, args.id, args.field, args.value)
    was = _value_before(lib, args.id, ".".join(keys), typ_given=args.typ is not None)
    path = record_value(lib, args.id, args.field, args.value, args.source,
                        basis=args.basis, typ=args.typ)
    after = _load(args)
    # the value as pinlib read it from the file ('1MHz' is 1 MHz), within the width
    value, typ = _as_read(after, args.id, keys, args.value, args.typ)
    typ = f", typ {typ}" if typ else ""
    print(fitted(f"recorded {'.'.join(keys)} = {value}{typ} ({args.basis}: "
                 f"{one_line(args.source)}) in {_rel(path)}"))
    if was is not None:
        # what the record replaces, so that a measured value or a typical one written
        # over is said, not lost in silence
        print(fitted("  " + was))
    _warn_implausible(after, args.id, ".".join(keys))
    _note_stale_title(after, args.id, tuple(keys), path)
    return 0


#: The fields a part's title states by custom ("..., 1.7 to 5.5 V, up to 104 MHz"), with
#: their unit and how a title writes them: a frequency with its unit, or a supply range
#: ("2.7 to 3.6 V", "1.8-5.5 V") or one voltage.
_TITLE_FIGURES = {
    ("timing", "f_max"): ("Hz", r"(\d+(?:\.\d+)?)\s*([kMG]?)Hz\b"),
    ("supply", "min"): ("V", r"(\d+(?:\.\d+)?)(?:\s*(?:to|-|–)\s*(\d+(?:\.\d+)?))?\s*V\b"),
    ("supply", "max"): ("V", r"(\d+(?:\.\d+)?)(?:\s*(?:to|-|–)\s*(\d+(?:\.\d+)?))?\s*V\b"),
}


def _title_figures(title: str, unit: str, pattern: str) -> list[float]:
    """The numbers of ``unit`` a title states, in SI (``up to 104 MHz`` -> [104e6])."""
    import re

    scale = {"": 1.0, "k": 1e3, "M": 1e6, "G": 1e9}
    out: list[float] = []
    for m in re.finditer(pattern, title):
        if unit == "Hz":
            out.append(float(m.group(1)) * scale[m.group(2)])
        else:
            out += [float(g) for g in m.groups() if g is not None]
    return out


def _note_stale_title(lib, pid: str, keys: tuple, path) -> None:
    """After a record of a figure a title states (f_max, the supply range): a note when
    the part's title is its class's word for word (``parts new`` copies it) and states
    that figure, none of it the value now recorded ("up to 104 MHz" over an f_max of
    50 MHz): the title is the part's own text, which pinlib does not rewrite."""
    import math

    from pinlib.core.errors import PinlibError
    from pinlib.core.quantity import format_si
    from pinlib.present.terminal import fitted

    figure = _TITLE_FIGURES.get(keys[-2:]) if len(keys) == 2 else None
    if figure is None:
        return
    try:
        part = lib.get(pid)
        parent = lib.files[pid].raw.get("extends")
        cls = lib.get(parent) if isinstance(parent, str) and parent in lib.files else None
    except PinlibError:
        return  # the library's warning says what is wrong
    if cls is None or part.title != cls.title:
        return  # a title of the part's own: its writer's words
    value = part
    for k in keys:
        value = getattr(value, k, None)
    value = getattr(value, "value", value)
    if not isinstance(value, (int, float)) or isinstance(value, bool):
        return
    unit, pattern = figure
    stated = _title_figures(part.title, unit, pattern)
    if not stated or any(math.isclose(x, value, rel_tol=1e-6) for x in stated):
        return
    print(fitted("note: " + M.TITLE_STATES_OLD_FIGURE.format(
        title=part.title, cls=cls.id, field=".".join(keys),
        value=format_si(value, unit, digits=_READ_DIGITS), file=_rel(path)), sys.stderr),
        file=sys.stderr)


#: Significant digits of a value echoed as read: as many as a datasheet gives, so that
#: '1.234 MHz' is not shown rounded to '1.23 MHz' (the notebook fields show 6 too).
_READ_DIGITS = 6


def _as_read(lib, pid: str, keys, value: str, typ: str | None) -> tuple[str, str | None]:
    """The value (and typical value) of field ``keys`` of part ``pid`` as the library
    read it: its SI number with a prefix and a space before the unit (``"1MHz"`` ->
    ``"1 MHz"``), a threshold relative to the supply as ``"0.3 VDD"``; the text as
    written (stripped) where the part holds no number for it."""
    from pinlib.core.errors import PinlibError
    from pinlib.core.quantity import Threshold, format_si, format_threshold
    from pinlib.library.values import Sourced

    def shown(x, unit: str, text: str | None) -> str | None:
        if isinstance(x, Threshold):
            return format_threshold(x)
        if isinstance(x, (int, float)) and not isinstance(x, bool):
            return format_si(x, unit, digits=_READ_DIGITS)
        return None if text is None else text.strip()

    try:
        item = next((x for path, x in _walk(lib.get(pid))
                     if tuple(map(str, path)) == tuple(keys) and isinstance(x, Sourced)), None)
    except PinlibError:
        item = None  # the library's warning names what is wrong
    if item is None:
        return value.strip(), None if typ is None else typ.strip()
    return (shown(item.value, item.unit, value) or value.strip(),
            None if typ is None else shown(item.typ, item.unit, typ))


def _value_before(lib, pid: str, field: str, typ_given: bool = False) -> str | None:
    """The value a record of ``field`` replaces, as a line: its text, typical value,
    basis and source, and the part it was inherited from; None when there is none."""
    from pinlib.core.errors import PinlibError

    try:
        entry = next((v for v in _show_data(lib, pid)["values"]
                      if v["field"] == field and not v["derived"]), None)
    except PinlibError:
        return None  # the record itself names what is wrong
    if entry is None:
        return None
    typ = entry["typ"]
    if isinstance(typ, (int, float)):
        from pinlib.core.quantity import format_si

        typ = format_si(typ, entry["unit"])
    typ = f", typ {typ}" if typ else ""
    source = f": {entry['source']}" if entry["source"] else ""
    line = f"replaces {entry['text']}{typ} ({entry['basis']}{source})"
    if entry["inherited"]:
        line += f", inherited from {entry['origin']}"
    elif entry["typ"] and not typ_given:
        line += "; its typ is dropped (give --typ to keep one)"
    return line


def _run_import(args) -> int:
    return partsimport.run_import(args, _load, _default_folder)


def _warn_implausible(lib, pid, field=None) -> list:
    """Print a warning for each implausible value of the part (only those of ``field``
    if given: the value, its typical value, and a rule over the table holding it, such
    as a cable's capacitance, delay and impedance that disagree)."""
    from pinlib.library.plausible import part_warnings

    def about(w) -> bool:
        f = w.field or ""
        return field is None or f == field or f.startswith(field + ".") or (
            bool(f) and field.startswith(f + "."))

    found = [w for w in part_warnings(lib.get(pid), lib) if about(w)]
    for w in found:
        _warn("pinlib: warning: " + w.message)
    return found


def _warn(line: str) -> None:
    """A warning on standard error: wrapped to a terminal, one line in a file or a pipe."""
    from pinlib.present.terminal import fitted

    print(fitted(line, sys.stderr), file=sys.stderr)


# --- schema ----------------------------------------------------------------------------

def _run_schema(args) -> int:
    from pinlib.core.tomlfile import atomic_write
    from pinlib.library.jsonschema import part_json_schema

    text = json.dumps(part_json_schema(), indent=2, ensure_ascii=False) + "\n"
    if args.output:
        atomic_write(args.output, text)
        print(f"wrote {_rel(args.output)}")
    else:
        sys.stdout.write(text)
    return 0


def _run_used_by(args) -> int:
    return partsusedby.run_used_by(args, _load)


def _run_check(args) -> int:
    return partscheck.run_check(args, _load)
