"""``pinlib measured DESIGN``: a rise time measured on the board against the model's Cb."""

from __future__ import annotations

import argparse
import sys

from pinlib.cli import SUMMARIES
from pinlib.cli.helptext import HelpLayout
from pinlib.core import messages as M

__all__ = ["add_parser", "run", "levels_type"]

EXAMPLES = """\
examples:
  pinlib measured board.toml --bus i2c0 --rise 250ns --probe 10pF
  pinlib measured board.toml --bus i2c0 --line scl --rise "1.1 us" \\
      --probe 12pF --levels 10,90
  pinlib measured board.toml --bus sense --segment sense-2 --rise 400ns \\
      --probe 10pF --json
  pinlib measured board.toml --bus reset --line reset --rise 600ns \\
      --probe 10pF
  pinlib measured board.toml --bus smb0 --rise 300ns --probe 10pF \\
      --levels 0.65V,1.5V

The rise of an open-drain line (I2C, SMBus, or a GPIO line an open-drain pin drives) is
an RC charge through the pull-up, so a rise read between two levels with a probe of
known capacitance gives the line's bus capacitance. The command takes the pull-up the
design puts on the line (its resistor in parallel with any inside the parts), turns the
reading into Cb over the pull-up's tolerance and a 10 % reading tolerance (common
practice), and compares it with the Cb the model adds up (on a GPIO line its load
capacitance: the trace and every pin on it). When they disagree it lists the
contributions to revisit, most likely first. A GPIO line only push-pull pins drive is
refused: its rise is the driver's own edge.

exit status: 0 the measurement agrees with the model, 1 it does not, 2 bad input.
"""


class LevelsInVolts(tuple):
    """Measuring levels given in volts (``"0.65V,1.5V"``, as SMBus measures its rise):
    (lo, hi) [V], made fractions of the line's rail by :func:`compare_rise`."""


def levels_type(text: str) -> tuple[float, float]:
    """``"30,70"`` or ``"0.3,0.7"`` -> (0.3, 0.7): percent when a number is above 1 or
    a ``%`` is written; a fraction beside a percentage (``"0.3,70"``) is refused.
    ``"0.65V,1.5V"`` (each with its unit, ``V`` or ``mV``) -> :class:`LevelsInVolts`."""
    raw = [b.strip() for b in str(text).split(",")]
    volts = [b.lower().endswith("v") for b in raw]
    if len(raw) == 2 and any(volts):
        from pinlib.core.errors import PinlibError
        from pinlib.core.quantity import parse

        if not all(volts):
            raise argparse.ArgumentTypeError(M.LEVELS_VOLTS_BOTH.format(got=text))
        try:
            lo, hi = (float(parse(b, "V", field="--levels")) for b in raw)
        except PinlibError:
            raise argparse.ArgumentTypeError(M.LEVELS_VOLTS_BOTH.format(got=text)) from None
        if not 0.0 <= lo < hi:
            raise argparse.ArgumentTypeError(M.LEVELS_VOLTS_ORDER.format(got=text))
        return LevelsInVolts((lo, hi))
    bits = [b.rstrip("%") for b in raw]
    try:
        lo, hi = (float(b) for b in bits)
    except ValueError:
        raise argparse.ArgumentTypeError(
            M.LEVELS_FORM + f" (got {text!r}); " + M.LEVELS_FORMS) from None
    percent = any(b.endswith("%") for b in raw)
    if not percent and max(lo, hi) > 1 and 0 < min(lo, hi) < 1:
        raise argparse.ArgumentTypeError(
            M.LEVELS_FORM + f" (got {text!r}); expected both in % of the rail (30,70) or "
            "both as fractions (0.3,0.7), not one of each (write 0.5%,70% for a level "
            "under 1 %)")
    if percent or lo > 1 or hi > 1:
        lo, hi = lo / 100.0, hi / 100.0
    if not 0.0 <= lo < hi < 1.0:
        raise argparse.ArgumentTypeError(
            M.LEVELS_OUT_OF_RANGE + f" (got {text!r}); expected 0 <= LO < HI < 100, in % of "
            "the rail (an RC rise never reaches 100 %)")
    return lo, hi


def add_parser(sub) -> None:
    p = sub.add_parser(
        "measured",
        help=SUMMARIES["measured"],
        description="Turn a rise time measured on an open-drain line (I2C, SMBus, or a GPIO "
                    "line an open-drain pin drives; with the probe's capacitance and the "
                    "measuring levels) into bus capacitance, and compare it with the "
                    "design's modelled Cb.",
        epilog=EXAMPLES, formatter_class=HelpLayout)
    p.add_argument("design", metavar="DESIGN", help="the design file (.toml)")
    p.add_argument("--bus", required=True, metavar="ID",
                   help="the bus measured (i2c, smbus, gpio)")
    p.add_argument("--line", metavar="LINE",
                   help="the line measured: sda (default) or scl on an i2c or smbus bus; on "
                        "a gpio bus the line's name (default: the bus's only line)")
    p.add_argument("--segment", metavar="ID",
                   help="the segment measured, on a bus with a bridging part (default: first)")
    p.add_argument("--rise", required=True, metavar="TIME",
                   help="the rise time read on the oscilloscope, e.g. 250ns")
    p.add_argument("--probe", required=True, metavar="CAP",
                   help="the probe's capacitance, e.g. 10pF")
    p.add_argument("--levels", type=levels_type, default=(0.3, 0.7), metavar="LO,HI",
                   help="the levels the rise was read between, in %% of the rail "
                        "(default 30,70), or in volts (0.65V,1.5V: SMBus's points)")
    p.add_argument("--library", metavar="DIR", action="append", default=[],
                   help="a team library folder (repeatable; takes precedence over the design's)")
    p.add_argument("--json", action="store_true", help="print the comparison as JSON")
    p.set_defaults(run=run, usage_error=p.error)


def run(args) -> int:
    from pinlib.core.quantity import parse
    from pinlib.engines.bench import compare_rise
    from pinlib.model.design import load_design

    rise = parse(args.rise, "s", field="--rise")
    probe = parse(args.probe, "F", field="--probe")
    design = load_design(args.design, library_folders=args.library)
    _check_open_drain_line(args, design)
    levels = {"levels_volts": tuple(args.levels)} if isinstance(
        args.levels, LevelsInVolts) else {"levels": args.levels}
    got = compare_rise(design, args.bus, rise, probe, signal=args.line,
                       segment=args.segment, **levels)
    if args.json:
        from pinlib.present.terminal import write_json

        write_json(got.to_json())
    else:
        from pinlib.present.terminal import table_width

        sys.stdout.write(got.format_text(width=table_width()))
    return 0 if got.verdict == "agrees" else 1


def _check_open_drain_line(args, design) -> None:
    """On an I2C or SMBus bus ``--line`` is ``sda`` or ``scl``, refused as a choice of
    the two (the option's usage error, exit 2); a GPIO bus's lines are named freely, so
    the option takes any name and the bus decides (:func:`compare_rise` refuses one it
    has not)."""
    from pinlib.core.protocols import is_open_drain
    from pinlib.engines.opendrain import SIGNALS

    bus = next((b for b in design.buses if b.id == args.bus), None)
    if bus is None or args.line is None or not is_open_drain(bus.protocol):
        return
    if args.line not in SIGNALS:
        choices = ", ".join(repr(s) for s in SIGNALS)
        args.usage_error(f"argument --line: invalid choice: {args.line!r} "
                         f"(choose from {choices})")
