"""``pinlib parts import``: list an IBIS file's components, pins and models, or write a
team part from one component (:mod:`pinlib.library.ibisimport`)."""

from __future__ import annotations

import sys
from pathlib import Path

from pinlib.core import messages as M
from pinlib.core.errors import InputError, LibraryError

__all__ = ["EXAMPLES", "add_arguments", "run_import"]

EXAMPLES = """\
examples:
  # list the components, their pins and models
  pinlib parts import buffer.ibs
  pinlib parts import buffer.ibs --component DEMO-IO \\
      --pin SDA=i2c-sda --pin SCL=i2c-scl --id demo-io --into parts --i-ol 3mA

  # guess the pins' functions, then accept the guess
  pinlib parts import buffer.ibs --component DEMO-IO
  pinlib parts import buffer.ibs --component DEMO-IO --id demo-io \\
      --into parts --yes

--pin maps an IBIS pin (its name or signal name) to a pin function; each value written
carries basis "ibis" and names the file, its revision, the [Model] and the corner used.
Without --pin the functions are guessed from the signal names and shown; nothing is
written until --yes accepts the guess (or the --pin list shown is given).
Built-in parts are never written.
"""


def add_arguments(p) -> None:
    p.add_argument("file", metavar="FILE.ibs", help="the IBIS file")
    p.add_argument("--component", help="the [Component] to import")
    p.add_argument("--pin", action="append", default=[], metavar="PIN=FUNCTION",
                   help="map an IBIS pin or signal to a pin function (repeatable)")
    p.add_argument("--id", dest="part_id", metavar="ID", help="the new part's id")
    p.add_argument("--into", metavar="FOLDER", help="the team library folder to write into")
    p.add_argument("--category", default="logic", help="the part's category (default: logic)")
    p.add_argument("--extends", metavar="CLASS", help="a class the part extends")
    p.add_argument("--i-ol", dest="i_ol", metavar="CURRENT",
                   help="the sink current at which an open-drain pin's v_ol is read, e.g. 3mA")
    p.add_argument("--yes", action="store_true",
                   help="without --pin: write the part with the guessed pin functions")


def _mapping(items) -> dict[str, str]:
    out = {}
    for item in items:
        pin, eq, function = item.partition("=")
        if not eq or not pin.strip() or not function.strip():
            raise InputError(M.IBIS_PIN_MAPPING, field="--pin", value=item,
                             expected="PIN=FUNCTION, e.g. SDA=i2c-sda")
        out[pin.strip()] = function.strip()
    return out


def _listing(ibis) -> None:
    print(f"{ibis.path}: IBIS {ibis.header.get('ibis ver', '?')}, "
          f"file rev {ibis.file_rev or '?'}")
    for comp in ibis.components.values():
        print(f"component {comp.name}" + (f" ({comp.manufacturer})" if comp.manufacturer else ""))
        for pin in comp.pins:
            print(f"  pin {pin.name:<6} {pin.signal:<16} {pin.model}")
    for name, choices in ibis.selectors.items():
        print(f"model selector {name}: " + ", ".join(m for m, _ in choices))
    for model in ibis.models.values():
        vr = model.voltage_range
        print(f"model {model.name}: {model.model_type}"
              + (f", {vr.typ:g} V" if vr is not None else ""))


def _guess(ibis, component: str, file: str, part_id: str | None = None,
           into: str | None = None) -> dict[str, str]:
    """The pin functions guessed from the component's signal names, printed with the
    command that writes them (the --id and --into given, else placeholders), as a shell
    reads it and fitted to the terminal's width."""
    from pinlib.library.pinguess import guess_function
    from pinlib.present.terminal import fitted_command, shell_word

    if component not in ibis.components:
        raise LibraryError(M.IBIS_UNKNOWN_COMPONENT, file=ibis.path, field="--component",
                           value=component, expected="one of " + ", ".join(ibis.components))
    pins = [p for p in ibis.components[component].pins
            if p.model.upper() not in ("POWER", "GND", "NC")]
    signals = [p.signal for p in pins]
    guess = {}
    print(f"pin functions guessed from the signal names of [Component] {component}:")
    for pin in pins:
        fn = guess_function(pin.signal)
        print(f"  pin {pin.name:<6} {pin.signal:<16} {fn or '(no guess)'}")
        if fn is not None:
            guess[pin.signal if signals.count(pin.signal) == 1 else pin.name] = fn
    if not guess:
        raise InputError(M.IBIS_NO_GUESS.format(component=component), field="--pin",
                         expected="--pin PIN=FUNCTION, e.g. SDA=i2c-sda")
    # an option and its value kept on one line
    words = ["pinlib", "parts", "import", shell_word(file),
             f"--component {shell_word(component)}"]
    words += [f"--pin {shell_word(f'{k}={v}')}" for k, v in guess.items()]
    words.append(f"--id {shell_word(part_id) if part_id else 'ID'}")
    if into:
        words.append(f"--into {shell_word(into)}")
    print("to write the part, add --yes (with --id and --into), or give the mapping:")
    print(fitted_command(" ", words))
    return guess


def run_import(args, load_library, default_folder) -> int:
    from pinlib.core.quantity import parse
    from pinlib.engines.ibisdriver import output_corners
    from pinlib.library.ibis import read_ibis
    from pinlib.library.ibisimport import import_part

    ibis = read_ibis(args.file)
    if args.component is None:
        _listing(ibis)
        return 0
    pins = _mapping(args.pin)
    if (pins or args.yes) and not args.part_id:  # a part is to be written: it needs an id
        raise InputError(M.IMPORT_NEEDS_ID, field="--id",
                         expected="--id ID, the new part's id (e.g. --id x-i2c)")
    if not pins:
        pins = _guess(ibis, args.component, args.file, args.part_id, args.into)
        if not args.yes:
            return 0
    i_ol = None if args.i_ol is None else parse(args.i_ol, "A", field="--i-ol")
    folder = Path(args.into) if args.into else default_folder(args)
    lib = load_library(args)
    found: list[str] = []
    path = import_part(lib, ibis, args.component, pins, args.part_id, folder,
                       category=args.category, extends=args.extends, i_ol=i_ol,
                       outputs=output_corners, warnings=found)
    from pinlib.present.terminal import fitted

    for text in found:
        print(fitted(f"warning: {text}", sys.stderr), file=sys.stderr)
    print(fitted(f"created {path} from [Component] {args.component} of {args.file}"))
    known = [f.resolve() for f in lib.folders]
    if folder.resolve() not in known:
        from pinlib.library.folders import not_a_library_yet_note

        print(fitted(not_a_library_yet_note(str(folder)), sys.stderr), file=sys.stderr)
    return 0
