"""Contract tests of the curated built-in library (``pinlib/devices/``).

The built-in library is data, not code, but every engine trusts it: these tests hold
each part class to the format's rules (provenance on every value, worst-case limits,
the pins each protocol needs) and to the published limits its class claims to meet.
"""

from __future__ import annotations

import math
import re
import warnings

import pytest

from pinlib.core.records import Record
from pinlib.library.loader import BUILTIN_DIR, load_library
from pinlib.library.schema import Part, Pin
from pinlib.library.values import BASES, Sourced

# ---------------------------------------------------------------------------
# Helpers
# ---------------------------------------------------------------------------


@pytest.fixture(scope="module")
def lib():
    # env=False: a user's PINLIB_LIBRARY must not leak team parts into this test.
    return load_library(env=False)


def _values(obj, path=()):
    """Every Sourced value inside a part, with its key path in the file."""
    if isinstance(obj, Sourced):
        yield path, obj
    elif isinstance(obj, dict):
        for k, v in obj.items():
            yield from _values(v, path + (k,))
    elif isinstance(obj, tuple):
        for i, v in enumerate(obj):
            yield from _values(v, path + (i,))
    elif isinstance(obj, Record):
        for name in type(obj).fields():
            yield from _values(getattr(obj, name), path + (name,))


def _pin_groups(part: Part):
    """(side, pins) for the part's own pins and for each side of a bridge."""
    groups = [(None, part.pins)] if part.pins else []
    groups += [(name, side.pins) for name, side in part.sides.items()]
    return groups


def _all_pins(part: Part):
    for side, pins in _pin_groups(part):
        for name, pin in pins.items():
            yield side, name, pin


def _supply_range(part: Part, side):
    s = part.supply_for(side)
    return None if s is None else (s.min.value, s.max.value)


def _raw_has(raw, path) -> bool:
    node = raw
    for key in path:
        if isinstance(node, dict) and key in node:
            node = node[key]
        elif isinstance(node, list) and isinstance(key, int) and key < len(node):
            node = node[key]
        else:
            return False
    return True


def _extends(lib, pid: str, base: str) -> bool:
    return base in lib.chain(pid)[1:]


# ---------------------------------------------------------------------------
# Loading, counts, provenance
# ---------------------------------------------------------------------------


def test_builtin_library_loads_without_problems(lib):
    assert [str(p) for p in lib.problems] == []
    assert lib.folders == [BUILTIN_DIR]


def test_library_size(lib):
    placeable = lib.placeable()
    abstract = {k: p for k, p in lib.parts.items() if p.abstract}
    assert len(placeable) >= 28, sorted(placeable)
    assert len(abstract) >= 3, sorted(abstract)
    assert len(placeable) + len(abstract) == len(lib)


def test_every_abstract_class_is_extended(lib):
    # An abstract class nobody extends is dead data that no engine ever reads.
    for pid, part in lib.parts.items():
        if part.abstract:
            users = [c for c in lib.parts if c != pid and _extends(lib, c, pid)]
            assert users, f"{pid} is abstract but nothing extends it"


def test_ids_match_file_names_and_folders_match_categories(lib):
    for pid, part in lib.parts.items():
        path = lib.path_of(pid)
        assert path.stem == pid
        folder = path.parent.name
        assert folder == part.category or (part.abstract and folder == "generic"), path


def test_every_placeable_part_has_provenance(lib):
    for pid, part in lib.placeable().items():
        assert part.provenance.basis == "generic", pid  # the built-in library is generic only
        assert part.provenance.source.strip(), f"{pid}: empty provenance source"
        # Its own file says where it comes from, not only an ancestor's.
        assert "provenance" in lib.files[pid].raw, f"{pid} inherits its provenance"


def test_every_value_origin_resolves(lib):
    for pid, part in lib.parts.items():
        chain = lib.chain(pid)
        for path, v in _values(part):
            where = f"{pid}: {'.'.join(map(str, path))}"
            assert v.origin in chain, f"{where} set by {v.origin}, not in {chain}"
            assert _raw_has(lib.files[v.origin].raw, path), f"{where}: not in {v.origin}'s file"
            assert v.basis is None or v.basis in BASES, where
            assert v.origin in lib.parts, f"{where}: {v.origin} did not load"
            source = v.source or lib.parts[v.origin].provenance.source
            assert source and source.strip(), f"{where}: no source and no provenance source"


# Semiconductor, module and connector vendors (from memory: common names in the trade).
# Matched as whole words, case-insensitive.
_VENDORS = [
    "texas instruments", "analog devices", "microchip", "atmel", "nxp", "philips",
    "stmicroelectronics", "infineon", "renesas", "maxim integrated", "onsemi",
    "on semiconductor", "nexperia", "diodes incorporated", "rohm", "toshiba", "vishay",
    "bosch", "sensirion", "winbond", "macronix", "micron", "cypress", "spansion", "xilinx",
    "altera", "lattice", "silicon labs", "espressif", "nordic semiconductor", "wiznet",
    "adafruit", "sparkfun", "fairchild", "linear technology", "intersil", "broadcom",
    "molex", "samtec", "amphenol", "hirose", "littelfuse", "semtech", "gigadevice",
    "melexis", "raspberry pi", "murata", "panasonic", "freescale", "motorola",
    "national semiconductor", "dallas semiconductor", "ftdi", "richtek", "osram",
]
# Part-number stems of well-known parts (from memory), to catch a copied product.
_PART_NUMBERS = [
    r"74(?:hc|hct|lvc|ahc|act|als|ls)\d", r"pca9\d{2}", r"tca9\d{2}", r"bss138",
    r"2n7002", r"at24c", r"24lc\d", r"w25q", r"stm32", r"atmega", r"esp32", r"ds3231",
    r"pcf85\d{2}", r"mcp\d{3,4}", r"ads1\d{3}", r"sht[234]\d", r"bme\d{3}", r"lm75",
    r"w5500", r"enc28j60", r"ili9\d{3}", r"st77\d{2}", r"adum\d", r"iso77\d",
]
_DENY = re.compile(r"\b(?:" + "|".join([re.escape(v) for v in _VENDORS] + _PART_NUMBERS)
                   + r")", re.IGNORECASE)


def test_deny_list_catches_what_it_should():
    assert _DENY.search("an EEPROM like the AT24C02")
    assert _DENY.search("made by Nexperia")
    assert not _DENY.search("maximum, dissipation, micro-controller, 74 kHz")


def test_no_real_manufacturer_or_product_names():
    files = sorted(BUILTIN_DIR.rglob("*.toml"))
    assert files
    for path in files:
        text = path.read_text(encoding="utf-8")
        m = _DENY.search(text)
        assert m is None, f"{path.relative_to(BUILTIN_DIR)}: {m.group(0)!r}"


# ---------------------------------------------------------------------------
# What each protocol needs
# ---------------------------------------------------------------------------


def test_every_i2c_part_has_sda_and_scl_with_c_in(lib):
    seen = 0
    for pid, part in lib.placeable().items():
        for side, pins in _pin_groups(part):
            fns = {p.function: p for p in pins.values()}
            if not {"i2c-sda", "i2c-scl"} & set(fns):
                continue
            seen += 1
            where = f"{pid} side {side}" if side else pid
            assert {"i2c-sda", "i2c-scl"} <= set(fns), f"{where}: SDA without SCL or back"
            for fn in ("i2c-sda", "i2c-scl"):
                assert fns[fn].c_in is not None, f"{where}: {fn} has no c_in"
    assert seen >= 15


def _has_drive_data(pin: Pin) -> bool:
    dc = all(getattr(pin, f) is not None for f in ("v_oh", "i_oh", "v_ol", "i_ol"))
    return pin.r_out is not None or dc or bool(pin.edges)


def test_every_push_pull_output_has_drive_data(lib):
    for pid, part in lib.placeable().items():
        for side, name, pin in _all_pins(part):
            if pin.drive == "push-pull":
                assert _has_drive_data(pin), f"{pid} {side or ''} {name}: no r_out, DC or edges"


def test_every_pin_of_an_active_part_states_its_absolute_maximum(lib):
    # a datasheet rates every pin of a part (common practice, no source), and pinlib
    # checks overshoot and undershoot only where a pin states abs_max: an idle output on
    # a shared line (a peripheral's CIPO while another drives) sees the line too. A
    # connector's pins are copper: no rating of their own. The I2C translators (a
    # MOSFET, a module of one) are left: their pins' rating is the transistor's, which
    # the class does not give
    missing = [(pid, side, name) for pid, part in lib.placeable().items()
               if part.category != "connector"
               and pid not in ("level-translator-mosfet", "level-translator-module")
               for side, name, pin in _all_pins(part) if pin.abs_max is None]
    assert not missing


def test_every_open_drain_output_states_its_sink(lib):
    # an I2C/SMBus pin may state none: its bus takes the specification's point for its
    # rail and mode (the generic I2C target states none, as that point depends on the rail)
    for pid, part in lib.placeable().items():
        for side, name, pin in _all_pins(part):
            if pin.drive == "open-drain" and not pin.function.startswith("i2c-"):
                assert pin.v_ol is not None and pin.i_ol is not None, f"{pid} {side} {name}"


def test_controllers_spi_outputs_have_edges_at_two_loads(lib):
    for pid, part in lib.placeable().items():
        if part.category != "controller":
            continue
        for fn in ("spi-sclk", "spi-copi", "spi-cs"):
            name, pin = part.pin_for(fn)
            assert pin.drive == "push-pull"
            assert len({e.load.value for e in pin.edges}) >= 2, f"{pid} {name}"
        t = part.timing
        for field in ("f_max", "t_valid", "t_setup", "t_hold"):
            assert getattr(t, field) is not None, f"{pid}: timing.{field}"
        assert part.pin_for("spi-cipo")[1].drive == "input"


def test_spi_peripherals_with_read_back_state_their_timing(lib):
    for pid, part in lib.placeable().items():
        if part.sides or part.category == "controller":
            continue
        got = part.pin_for("spi-cipo")
        if got is None or got[1].drive != "push-pull":
            continue
        for field in ("f_max", "t_valid", "t_setup", "t_hold", "test_load"):
            assert getattr(part.timing, field) is not None, f"{pid}: timing.{field}"


def test_cables_carry_a_line_and_no_pins(lib):
    for pid, part in lib.placeable().items():
        if part.category == "cable":
            assert part.line is not None and not part.pins and not part.sides, pid
        else:
            assert part.line is None, pid
            assert part.pins or part.sides, f"{pid}: no pins"


def test_bridges_are_described_on_both_sides(lib):
    for pid, part in lib.placeable().items():
        if part.bridge is None:
            assert not part.sides, pid
            continue
        assert set(part.sides) == {"a", "b"}
        for s in ("a", "b"):
            assert part.sides[s].pins, f"{pid}: side {s} has no pins"
            assert part.supply_for(s) is not None, f"{pid}: side {s} has no supply"


# ---------------------------------------------------------------------------
# Physics and the direction that hurts
# ---------------------------------------------------------------------------

# For a value with a typ beside it, which side of typ the stored limit must lie on
# (docs/formats/part.md, the rule for every number: max capacitance, leakage, VOL,
# delays; min VIH, setup, hold; VIL is a max threshold, guaranteed lower than the typical
# switching point).
_ABOVE_TYP = {"c_in", "leakage", "v_ol", "v_ih", "t_valid", "t_pd", "t_setup", "t_hold",
              "t_cs_setup", "t_cs_hold", "rise", "fall", "low_offset", "r_on", "v_gs_th",
              "capacitance", "t_vd_dat", "t_vd_ack"}
_BELOW_TYP = {"v_il"}


def test_stored_values_are_the_limit_that_hurts(lib):
    checked = 0
    for pid, part in lib.parts.items():
        for path, v in _values(part):
            if v.typ is None:
                continue
            field = path[-1]
            vdd = (part.supply_for(path[1] if path[0] == "sides" else None) or part.supply)
            def at(x, vdd=vdd):
                return x.resolve(vdd.max.value) if hasattr(x, "resolve") else x
            stored, typ = at(v.value), at(v.typ)
            where = f"{pid}: {'.'.join(map(str, path))}"
            if field in _ABOVE_TYP:
                assert stored >= typ, f"{where}: {v.text} is below its typ"
                checked += 1
            elif field in _BELOW_TYP:
                assert stored <= typ, f"{where}: {v.text} is above its typ"
                checked += 1
    assert checked > 50


def test_input_thresholds_and_output_levels_are_ordered(lib):
    for pid, part in lib.parts.items():
        for side, name, pin in _all_pins(part):
            rng = _supply_range(part, side)
            if rng is None:
                continue
            for vdd in rng:
                if pin.v_il is not None and pin.v_ih is not None:
                    assert pin.v_il.at(vdd) < pin.v_ih.at(vdd), f"{pid} {name} at {vdd} V"
                if pin.v_ol is not None and pin.v_oh is not None:
                    assert pin.v_ol.at(vdd) < pin.v_oh.at(vdd), f"{pid} {name} at {vdd} V"
                if pin.abs_max is not None:
                    # A pin must at least survive its own supply.
                    assert pin.abs_max.at(vdd) >= vdd, f"{pid} {name} at {vdd} V"


# derived from the RC step response: t(10-90) = ln 9 · RC, t(20-80) = ln 4 · RC
# (docs/references.md, board traces [D]).  A driver's own edge only adds to it, so a stated
# edge can never be faster than its r_out into the stated load.
_RC_FACTOR = {"10-90": math.log(9.0), "20-80": math.log(4.0)}


def test_edges_are_consistent_with_r_out_and_load(lib):
    checked = 0
    for pid, part in lib.parts.items():
        for _side, name, pin in _all_pins(part):
            loads = sorted(pin.edges, key=lambda e: e.load.value)
            for e in loads:
                for t in (e.rise, e.fall):
                    if t is None or pin.r_out is None:
                        continue
                    floor = _RC_FACTOR[e.levels] * pin.r_out.value * e.load.value
                    assert t.value >= floor, f"{pid} {name}: {t.text} at {e.load.text}"
                    checked += 1
            # A heavier load never gives a faster edge.
            for lo, hi in zip(loads, loads[1:], strict=False):
                for attr in ("rise", "fall"):
                    a, b = getattr(lo, attr), getattr(hi, attr)
                    if a is not None and b is not None:
                        assert b.value >= a.value, f"{pid} {name} {attr}"
    assert checked > 40


def test_a_stated_r_out_fits_the_pins_own_edges(lib):
    # a pin that states r_out beside its edge points is fitted with r_out held (the ramp
    # alone free): the two must agree, or every design that places it carries the note
    # "the points do not fit the driver model within 5%" (mcu-1v8: 45 Ω stated where
    # its edges need about 65 Ω).  5 %: the fit's own tolerance (common practice, no
    # source)
    from pinlib.physics.driver.fitting import fit_driver

    checked = 0
    for pid, part in lib.parts.items():
        for _side, name, pin in _all_pins(part):
            if pin.r_out is None or len(pin.edges) < 2:
                continue
            loads = [e.load.value for e in pin.edges]
            for attr in ("rise", "fall"):
                times = [getattr(e, attr).value for e in pin.edges]
                with warnings.catch_warnings():
                    warnings.simplefilter("ignore")  # the misfit is asserted below
                    fit = fit_driver(loads, times, pin.edges[0].levels,
                                     r_out=pin.r_out.value)
                worst = max(abs(r) / t for r, t in zip(fit.residuals, times, strict=True))
                assert worst <= 0.05, f"{pid} {name} {attr}: {worst:.1%} off"
                checked += 1
    assert checked >= 20


def test_r_out_within_what_the_dc_points_guarantee(lib):
    # derived from Ohm's law: VOH at IOH bounds the pull-up resistance from above,
    # (VDD - VOH)/IOH; VOL at IOL bounds the pull-down resistance, VOL/IOL.
    for pid, part in lib.parts.items():
        for side, name, pin in _all_pins(part):
            rng = _supply_range(part, side)
            if pin.r_out is None or rng is None:
                continue
            for vdd in rng:
                if pin.v_oh is not None and pin.i_oh is not None:
                    r_up = (vdd - pin.v_oh.at(vdd)) / pin.i_oh.value
                    assert pin.r_out.value <= r_up, f"{pid} {name} at {vdd} V: {r_up:.1f} Ω"
                if pin.v_ol is not None and pin.i_ol is not None:
                    r_down = pin.v_ol.at(vdd) / pin.i_ol.value
                    assert pin.r_out.value <= r_down, f"{pid} {name} at {vdd} V: {r_down:.1f} Ω"


# published: SI definition of the metre, c = 299 792 458 m/s exactly.
_C0 = 299_792_458.0


def test_cable_classes_obey_the_lossless_line_relations(lib):
    cables = {k: p for k, p in lib.placeable().items() if p.line is not None}
    assert len(cables) >= 3
    for pid, part in cables.items():
        line = part.line
        # Nothing travels faster than light: at least 1/c = 3.336 ns/m.
        assert line.delay.value > 1.0 / _C0, pid
        # derived from the lossless TEM line: Z0 = sqrt(L/C), delay = sqrt(LC), so
        # delay = Z0 · C.  The class figures were chosen to agree within 2 %.
        assert line.delay.value == pytest.approx(line.impedance.value * line.capacitance.value,
                                                 rel=0.02), pid


# published: I2C-bus specification UM10204 rev. 6, table 10: fSCL max and tVD;DAT max
# per mode, and table 9: Ci max 10 pF, Ii max 10 µA, IOL min 3 mA (20 mA Fm+) at 0.4 V.
UM10204_TABLE10_TVD_DAT = {100e3: 3.45e-6, 400e3: 0.9e-6, 1e6: 0.45e-6}
UM10204_TABLE9_CI_MAX = 10e-12
UM10204_TABLE9_II_MAX = 10e-6
UM10204_TABLE9_IOL_FMPLUS = 20e-3


def _i2c_targets(lib):
    """Placeable I2C chips: classes extending the I2C target base, but not modules."""
    return {k: p for k, p in lib.placeable().items()
            if _extends(lib, k, "i2c-peripheral") and p.category != "module"}


def test_i2c_targets_meet_the_i2c_specification(lib):
    targets = _i2c_targets(lib)
    assert len(targets) >= 6
    for pid, part in targets.items():
        f_max = part.timing.f_max.value
        assert f_max in UM10204_TABLE10_TVD_DAT, f"{pid}: f_max {f_max} is not a mode limit"
        assert part.timing.t_vd_dat.value <= UM10204_TABLE10_TVD_DAT[f_max], pid
        for fn in ("i2c-sda", "i2c-scl"):
            pin = part.pin_for(fn)[1]
            assert pin.c_in.value <= UM10204_TABLE9_CI_MAX * (1 + 1e-9), f"{pid} {fn}"
            assert pin.leakage.value <= UM10204_TABLE9_II_MAX * (1 + 1e-9), f"{pid} {fn}"
        sda = part.pin_for("i2c-sda")[1]
        if f_max == 1e6:
            assert sda.i_ol.value >= UM10204_TABLE9_IOL_FMPLUS, f"{pid}: Fm+ needs 20 mA"


def test_i2c_sink_meets_vol1_or_vol2(lib):
    # published: UM10204 rev. 6, table 9: VOL1 0.4 V at 3 mA (VDD > 2 V);
    # VOL2 0.2·VDD at 2 mA (VDD <= 2 V).
    from pinlib.engines.limits import limits_for

    for pid, part in _i2c_targets(lib).items():
        sda = part.pin_for("i2c-sda")[1]
        vmax = part.supply.max.value
        if sda.v_ol is None or sda.i_ol is None:
            # no point of its own: the engine's is the specification's at each rail
            lim = limits_for("i2c", "fast")
            for vdd in (part.supply.min.value, vmax):
                vol, iol, _ = lim.default_sink(vdd)
                low = vdd <= 2.0
                assert vol.at(vdd) == pytest.approx(0.2 * vdd if low else 0.4), pid
                assert iol.value == pytest.approx(2e-3 if low else 3e-3), pid
            continue
        if vmax > 2.0:
            assert sda.v_ol.at(vmax) == pytest.approx(0.4, abs=1e-9), pid
            assert sda.i_ol.value >= 3e-3, pid
        else:
            assert sda.v_ol.at(vmax) <= 0.2 * vmax + 1e-9, pid
            assert sda.i_ol.value >= 2e-3, pid


# published: SMBus specification 3.1, table 4 (high-power DC), [C] since 5 December
# 2026 (docs/references.md): VIL 0.8 V max, VIH 1.35 V min, ILEAK-PIN 10 µA, CPIN 10 pF
# (recommended), VOL 0.4 V at 4 mA (100 kHz class).
SMBUS31_TABLE4 = {"v_il": 0.8, "v_ih": 1.35, "v_ol": 0.4, "i_ol": 4e-3,
                  "leakage": 10e-6, "c_in": 10e-12}


def test_smbus_devices_use_the_smbus_levels(lib):
    smbus = {k: p for k, p in lib.placeable().items() if _extends(lib, k, "smbus-device")}
    assert len(smbus) >= 2
    for part in smbus.values():
        sda, scl = part.pin_for("i2c-sda")[1], part.pin_for("i2c-scl")[1]
        for pin in (sda, scl):
            assert pin.v_il.at(None) == pytest.approx(SMBUS31_TABLE4["v_il"], abs=1e-9)
            assert pin.v_ih.at(None) == pytest.approx(SMBUS31_TABLE4["v_ih"], abs=1e-9)
            assert pin.leakage.value <= SMBUS31_TABLE4["leakage"] * (1 + 1e-9)
            assert pin.c_in.value <= SMBUS31_TABLE4["c_in"] * (1 + 1e-9)
        assert sda.v_ol.at(None) == pytest.approx(SMBUS31_TABLE4["v_ol"], abs=1e-9)
        assert sda.i_ol.value >= SMBUS31_TABLE4["i_ol"] * (1 - 1e-9)


def test_offset_repeater_reads_low_below_its_own_offset(lib):
    # A static-offset repeater must not read its own driven low as an external low
    # (it would latch): its input threshold on the offset side lies below the offset.
    repeaters = {k: p for k, p in lib.placeable().items()
                 if p.bridge is not None and p.bridge.kind == "repeater"}
    assert repeaters
    for pid, part in repeaters.items():
        s = part.bridge.low_offset_side
        assert s is not None, pid
        side = part.sides[s]
        assert side.low_offset is not None, pid
        # The format keeps the offset's max (and typ); the latch margin needs the low end,
        # so the lowest figure known is used.
        lowest = min(x for x in (side.low_offset.value, side.low_offset.typ) if x is not None)
        for name, pin in side.pins.items():
            assert pin.v_il.at(side.supply.min.value) < lowest, name


def test_mosfet_translator_can_turn_on(lib):
    # The gate sits at the side-a rail: the channel conducts only if VGS(th) max is
    # below the lowest side-a supply.
    fets = {k: p for k, p in lib.placeable().items()
            if p.bridge is not None and p.bridge.kind == "mosfet"}
    assert fets
    for pid, part in fets.items():
        assert part.bridge.r_on is not None and part.bridge.v_gs_th is not None, pid
        assert part.bridge.v_gs_th.value < part.supply_for("a").min.value, pid
        assert part.supply_for("a").max.value <= part.supply_for("b").max.value, pid


def test_required_behaviours_are_represented(lib):
    # The library must offer the cases the checks are built to catch.
    parts = lib.placeable()
    pins = [(pid, pin) for pid, p in parts.items() for _, _, pin in _all_pins(p)]
    assert any(pin.pullup is not None for _, pin in pins)          # a carried pull-up
    assert any(pin.off_tolerant for _, pin in pins)                # powered-off safe
    assert any(pin.pullup_internal is not None for _, pin in pins)
    relative_abs_max_1v8 = [pid for pid, p in parts.items()
                            if p.supply is not None and p.supply.max.value < 2.0
                            and any(pin.abs_max is not None and pin.abs_max.value.relative
                                    for _, _, pin in _all_pins(p))]
    assert relative_abs_max_1v8                                    # 1.8 V-only parts
    kinds = {p.bridge.kind for p in parts.values() if p.bridge is not None}
    assert kinds == {"repeater", "mosfet", "buffer", "isolator"}


# ---------------------------------------------------------------------------
# GPIO: the controllers' general-purpose I/O, the supervisor class
# ---------------------------------------------------------------------------

# One general-purpose I/O in the three set-ups firmware gives it (controller-base): the
# format gives a pin one drive, so each set-up is a pin of its own that a design names.
_GPIO_SETUPS = {"gpio_out": "push-pull", "gpio_in": "input", "gpio_od": "open-drain"}


def test_every_controller_has_a_gpio_in_each_set_up(lib):
    controllers = {k: p for k, p in lib.placeable().items() if p.category == "controller"}
    assert {"mcu-1v8", "mcu-3v3", "mcu-5v", "fpga-io-3v3"} <= set(controllers)
    for pid, part in controllers.items():
        for name, drive in _GPIO_SETUPS.items():
            pin = part.pins.get(name)
            assert pin is not None, f"{pid} has no {name}"
            assert (pin.function, pin.drive) == ("gpio", drive), f"{pid} {name}"
            assert pin.c_in is not None and pin.abs_max is not None, f"{pid} {name}"
        assert _has_drive_data(part.pins["gpio_out"]), pid
        assert part.pins["gpio_out"].v_oh is not None, pid  # a level check needs VOH
        gin, god = part.pins["gpio_in"], part.pins["gpio_od"]
        assert gin.v_il is not None and gin.v_ih is not None, pid
        assert god.v_ol is not None and god.i_ol is not None, pid


def test_microcontrollers_have_a_reset_input_a_supervisor_can_drive(lib):
    for pid in ("mcu-1v8", "mcu-3v3", "mcu-5v"):
        pin = lib.get(pid).pins["reset"]
        assert (pin.function, pin.drive) == ("gpio", "input"), pid
        assert None not in (pin.v_il, pin.v_ih, pin.abs_max, pin.c_in), pid


def test_a_voltage_supervisor_class_with_an_open_drain_reset(lib):
    part = lib.get("supervisor-od")
    assert not part.abstract and part.category == "power"
    reset = part.pins["reset"]
    assert (reset.function, reset.drive) == ("gpio", "open-drain")
    assert None not in (reset.v_ol, reset.i_ol, reset.c_in, reset.abs_max)
    # it serves the common rails (1.8, 3.3 and 5 V, common practice, no source) ...
    assert part.supply.min.value <= 1.8 and part.supply.max.value >= 5.0
    # ... and its output takes a pull-up to any of them whatever its own rail
    assert reset.abs_max.at(part.supply.min.value) >= 5.0
    mr = part.pins["mr"]
    assert (mr.function, mr.drive) == ("gpio", "input") and mr.abs_max is not None


# ---------------------------------------------------------------------------
# Values whose basis is "published"
# ---------------------------------------------------------------------------

_UM = "I2C-bus specification UM10204 rev. 6, "
_SMB = "SMBus specification 3.1, "
#: Each source a built-in value with the basis "published" may quote, and the standard's
#: number for it: a level as (scale, offset) of scale·VDD + offset, else SI units.
PUBLISHED_LIMITS = {
    _UM + "table 9, Ci max": 10e-12,  # published: UM10204 rev. 6, table 9 [C]
    _UM + "table 9, Ii max": 10e-6,  # published: UM10204 rev. 6, table 9 [C]
    _UM + "table 9, VIL max": (0.3, 0.0),  # published: UM10204 rev. 6, table 9 [C]
    _UM + "table 9, VIH min": (0.7, 0.0),  # published: UM10204 rev. 6, table 9 [C]
    _UM + "table 9, VOL2 (VDD <= 2 V)": (0.2, 0.0),  # published: UM10204 rev. 6, table 9 [C]
    _UM + "table 9, VOL2 at 2 mA": 2e-3,  # published: UM10204 rev. 6, table 9 [C]
    # published: UM10204 rev. 6, table 9 [C]
    _UM + "table 9, Fast-mode Plus IOL min at VOL 0.4 V": 20e-3,
    _UM + "table 9, Fast-mode Plus tof max": 120e-9,  # published: UM10204 rev. 6, table 9 [C]
    # published: UM10204 rev. 6, table 10 [C]
    _UM + "table 10, Standard-mode fSCL max": 100e3,
    _UM + "table 10, Standard-mode tVD;DAT max": 3.45e-6,
    _UM + "table 10, Standard-mode tVD;ACK max": 3.45e-6,
    _UM + "table 10, Fast-mode Plus fSCL max": 1e6,
    _UM + "table 10, Fast-mode Plus tVD;DAT max": 0.45e-6,
    _UM + "table 10, Fast-mode Plus tVD;ACK max": 0.45e-6,
    # published: SMBus specification 3.1, table 4 (high-power DC) [C]
    _SMB + "table 4, ILEAK-PIN": 10e-6,
    _SMB + "table 4, VIL max": (0.0, 0.8),
    _SMB + "table 4, VIH min": (0.0, 1.35),
    _SMB + "table 4, VHYS": (0.0, 0.08),
    _SMB + "table 4, VOL max (100 kHz class)": (0.0, 0.4),
    _SMB + "table 4, pull-down current at VOL (100 kHz class)": 4e-3,
    # published: SMBus specification 3.1, table 2 (AC) [C]
    _SMB + "table 2, fSMB max (100 kHz class)": 100e3,
}

#: Values that quote one of those sources but keep the generic basis: SMBALERT# is not
#: an SMBCLK/SMBDAT pin, and the reference collection does not say that table 4 covers it.
QUOTES_A_LIMIT_BUT_GENERIC = {
    ("fan-controller-smbus", "pins.alert.leakage"),
    ("fan-controller-smbus", "pins.alert.v_ol"),
    ("fan-controller-smbus", "pins.alert.i_ol"),
}


def _own_values(lib):
    """(part id, dotted path, value) of every value a built-in file writes itself."""
    for pid, part in lib.parts.items():
        for path, v in _values(part):
            if v.origin == pid:
                yield pid, ".".join(map(str, path)), v


def test_every_published_value_quotes_its_standard_and_equals_its_number(lib):
    from pinlib.core.quantity import Threshold

    published = [(pid, path, v) for pid, path, v in _own_values(lib)
                 if v.basis == "published"]
    assert len(published) >= 40
    for pid, path, v in published:
        where = f"{pid}: {path}"
        assert re.search(r"UM10204|SMBus specification", v.source or ""), where
        assert v.source in PUBLISHED_LIMITS, f"{where}: {v.source!r} is not a table entry"
        expected = PUBLISHED_LIMITS[v.source]
        if isinstance(v.value, Threshold):
            assert (v.value.scale, v.value.offset) == pytest.approx(expected, abs=1e-12), where
        else:
            assert v.value == pytest.approx(expected, rel=1e-12), where
        assert not v.soft and v.rests_on == "published", where


def test_a_value_quoting_a_standard_s_limit_is_published_unless_listed(lib):
    # a class that quotes a table entry and keeps the generic basis is a choice to name
    quoting = {(pid, path): v for pid, path, v in _own_values(lib)
               if v.source in PUBLISHED_LIMITS}
    generic = {key for key, v in quoting.items() if v.basis != "published"}
    assert generic == QUOTES_A_LIMIT_BUT_GENERIC


def test_a_standard_s_limits_reach_the_classes_that_inherit_them(lib):
    eeprom = lib.get("eeprom-i2c").pins["sda"]
    assert eeprom.v_ih.rests_on == "published" and eeprom.v_ih.origin == "i2c-peripheral"
    # the class's own choices stay generic: its Fast-mode timing, its rating
    peripheral = lib.get("i2c-peripheral")
    assert peripheral.timing.f_max.soft and peripheral.pins["sda"].abs_max.soft
    # from memory, unconfirmed (the JEDEC levels): generic
    assert lib.get("fpga-io-3v3").pins["sda"].v_ih.rests_on == "generic"
    assert lib.get("io-expander-legacy-5v").pins["sda"].v_il.rests_on == "generic"
