"""A check fails only against a published or datasheet limit: against a class's typical
value or an estimate it warns where it would fail (``pinlib.model.result.soften``), on
SPI and push-pull lines here; the open-drain side has tests of its own.

The design is invented test data on the built-in classes (their values are typical of
their class: basis ``generic``).  Each check is compared with the same design whose
parts restate the very same numbers in a team part of another basis: the numbers,
limits and margins are equal, only the firmness differs.
"""

from __future__ import annotations

import math

import pytest

from pinlib.core import messages as M
from pinlib.engines.dispatch import check_design
from pinlib.library.loader import load_library
from pinlib.model.design import load_design
from pinlib.model.result import check_max, soft_basis, soften, warns_only

DESIGN = """\
format = "pinlib.design/1"
title = "soft limits (invented test design)"
library = ["team"]

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2

[[bus]]
id = "s"
protocol = "spi"
clock = "120 MHz"
supply = "3.3 V"
spi_mode = 1
devices = [
  { ref = "U1", part = "CTRL", role = "controller" },
  { ref = "U2", part = "FLASH" },
]
lines.sclk = { length = "20 cm", geometry = "g" }
lines.copi = { length = "20 cm", geometry = "g" }
lines.cipo = { length = "20 cm", geometry = "g" }
lines.cs = { length = "20 cm", geometry = "g" }

[[bus]]
id = "irq"
protocol = "gpio"
supply = "3.3 V"
devices = [
  { ref = "U3", part = "mcu-1v8", role = "controller", pin = "cs", supply = "1.8 V" },
  { ref = "U4", part = "CTRL", pin = "cipo" },
]
lines.irq = { length = "5 cm", capacitance = "1 pF/cm" }
"""

#: What each team part restates of its class: timing values, and pin values by pin.
_TIMING = {"nor-flash-spi": ("f_max", "t_setup", "t_high", "t_low", "t_cs_setup",
                             "t_cs_hold", "spi_modes"),
           "mcu-3v3": ("f_max", "t_setup")}
_PINS = {"nor-flash-spi": {p: ("abs_max",) for p in ("sclk", "copi", "cs")},
         "mcu-3v3": {"cipo": ("v_ih", "v_il", "abs_max")}}


def _value_text(v) -> str:
    if isinstance(v, tuple):   # spi_modes
        return "[" + ", ".join(str(m) for m in v) + "]"
    return f'"{v.text}"'


def _restated(cls: str, pid: str, basis: str) -> str:
    """A team part ``pid`` extending ``cls`` that restates the values of :data:`_TIMING`
    and :data:`_PINS` with the class's own numbers, under ``basis``."""
    part = load_library(env=False).get(cls)
    lines = ['format = "pinlib.part/1"', f'id = "{pid}"',
             f'title = "{cls}, values restated (invented test data)"', f'extends = "{cls}"',
             f'provenance = {{ basis = "{basis}", source = "test data, invented" }}', "",
             "[timing]"]
    lines += [f"{n} = {_value_text(getattr(part.timing, n))}" for n in _TIMING[cls]]
    for pin, names in _PINS[cls].items():
        lines += ["", f"[pins.{pin}]"]
        lines += [f"{n} = {_value_text(getattr(part.pins[pin], n))}" for n in names]
    return "\n".join(lines) + "\n"


def _checks(tmp_path, basis: str | None) -> dict:
    """Every check of the design by (bus, id, subject, signal), on the built-in classes
    (``basis`` None) or on team parts restating them under ``basis``."""
    team = tmp_path / "team"
    team.mkdir(exist_ok=True)
    ctrl, flash = "mcu-3v3", "nor-flash-spi"
    if basis is not None:
        ctrl, flash = "firm-mcu", "firm-flash"
        (team / "firm-mcu.toml").write_text(_restated("mcu-3v3", ctrl, basis), "utf-8")
        (team / "firm-flash.toml").write_text(_restated("nor-flash-spi", flash, basis),
                                              "utf-8")
    (tmp_path / "d.toml").write_text(DESIGN.replace("CTRL", ctrl).replace("FLASH", flash),
                                     "utf-8")
    res = check_design(load_design(tmp_path / "d.toml"))
    out = {}
    for b in res.buses:
        for c in b.checks:
            out[(b.id, c.id, c.subject, None)] = c
        for ln in b.lines:
            for c in ln.checks:
                out[(b.id, c.id, c.subject, ln.signal)] = c
    return out


#: The checks that fail on this design against a value of the parts (each beyond its
#: limit, margin < 0), and the value each rests on.
SOFT = [("s", "f-max", "U1", None), ("s", "f-max", "U2", None),
        ("s", "spi-mode", "U2", None), ("s", "copi-setup", "U2", None),
        ("s", "cipo-setup", "U2", None), ("s", "sclk-high", "U2", None),
        ("s", "sclk-low", "U2", None), ("s", "overshoot", "U2", "sclk"),
        ("s", "overshoot", "U2", "copi"), ("irq", "level-high", "U4", "irq")]


@pytest.fixture(scope="module")
def runs(tmp_path_factory):
    return {basis: _checks(tmp_path_factory.mktemp(basis or "generic"), basis)
            for basis in (None, "datasheet", "estimate")}


@pytest.mark.parametrize("key", SOFT, ids=lambda k: "-".join(x for x in k if x))
def test_a_check_against_a_class_value_warns_where_a_datasheets_fails(runs, key):
    generic, firm, est = (runs[b][key] for b in (None, "datasheet", "estimate"))
    # the same numbers (the team part restates the class's): only the status differs
    for c in (firm, est):
        assert c.value == generic.value and c.limit == generic.limit
        assert c.margin is None or math.isclose(c.margin, generic.margin, rel_tol=1e-12)
    assert firm.status == "fail" and "limit_basis" not in firm.details
    assert generic.status == "warn" and generic.details["limit_basis"] == "generic"
    assert est.status == "warn" and est.details["limit_basis"] == "estimate"
    assert generic.message.startswith(firm.message)
    assert generic.message[len(firm.message):].startswith(M.SOFT_LIMIT_GENERIC.split("{")[0])
    assert est.message[len(firm.message):].startswith(M.SOFT_LIMIT_ESTIMATE.split("{")[0])
    # the change to the design that would pass it is the same
    assert generic.fix == firm.fix


def test_a_passing_check_against_a_class_value_is_unchanged_but_marked(runs):
    c = runs[None][("s", "spi-mode", "U1", None)]   # mode 1 is among mcu-3v3's
    assert c.status == "pass" and c.details["limit_basis"] == "generic"
    assert "warning, not a failure" not in c.message


def test_the_exit_status_follows(tmp_path, monkeypatch, capsys):
    from pinlib.cli import main

    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    _checks(tmp_path, None)
    assert main(["check", str(tmp_path / "d.toml")]) == 0
    out = capsys.readouterr().out
    flat = " ".join(out.split())
    assert "FAIL" not in out and "not its datasheet's" in flat   # spi-mode's message
    # a check beyond a class's limit says beside the limit why it only warns
    # 120 MHz: the design's clock (invented); 104 MHz: nor-flash-spi's f_max
    # (pinlib/devices/memory/nor-flash-spi.toml, common practice, no source)
    assert "WARN s U2: Clock ≤ f(max) 120 MHz, limit ≤ 104 MHz (a class's typical value)," in flat
    assert "Edge time" in flat and "(a rule of thumb), margin -" in flat
    assert max(len(line) for line in out.splitlines()) <= 80
    # the closing line counts the warnings that would fail against a datasheet's limit
    # (not those resting on a rule of thumb too: an assumed CS lead still warns)
    soft = sum(1 for c in _checks(tmp_path, None).values() if c.status == "warn"
               and "limit_basis" in c.details and not c.details.get("rule_of_thumb")
               and (c.margin is None or c.margin < 0))
    assert soft >= len(SOFT)
    assert (f"warn ({soft} for want of a datasheet value), 0 fail on "
            "2 buses") in flat
    _checks(tmp_path, "datasheet")
    assert main(["check", str(tmp_path / "d.toml")]) == 1
    assert "for want of a datasheet value" not in capsys.readouterr().out


def test_the_monte_carlo_tables_agree_with_the_engine(tmp_path):
    # every drawn board: a check against a class value never fails there either (the
    # tables cap it at a warning as the engine does), one against a datasheet's does
    from pinlib.studies.whatif import monte_carlo

    fails = {}
    for basis in (None, "datasheet"):
        folder = tmp_path / (basis or "generic")
        folder.mkdir()
        _checks(folder, basis)
        text = (folder / "d.toml").read_text("utf-8").replace(
            'supply = "3.3 V"\nspi_mode', 'supply = "3.3 V"\nsupply_tolerance = "5 %"\nspi_mode')
        (folder / "d.toml").write_text(text, "utf-8")
        got = monte_carlo(load_design(folder / "d.toml"), 40, seed=3)
        fails[basis] = {(c.bus, c.id, c.signal): c.fails for c in got.checks
                        if c.bus == "s" and c.id in ("f-max", "copi-setup", "overshoot")}
        # the text says why a check beyond its limit on every board only warns
        said = " ".join(got.format_text(limit=None).split())
        assert ("warns on 40 (a class's typical limit)" in said) is (basis is None)
    assert fails[None] and all(n == 0 for n in fails[None].values())
    assert fails["datasheet"].keys() == fails[None].keys()
    # every one of the 40 boards drawn fails (the margins are far below 0 on each)
    assert all(n == 40 for n in fails["datasheet"].values())


def test_soft_basis_takes_the_softest():
    lib = load_library(env=False)
    flash = lib.get("nor-flash-spi")
    assert flash.timing.f_max.rests_on == "generic" and flash.timing.f_max.soft
    assert soft_basis(None) is None and soft_basis() is None
    assert soft_basis(flash.timing.f_max, None) == "generic"
    chk = soften(check_max("x", 2.0, 1.0, "V", "s", "m"), "estimate", what="VIH")
    assert chk.status == "warn" and warns_only(chk)
    assert chk.message == "m" + M.SOFT_LIMIT_ESTIMATE.format(what="VIH", whose="the part's")
    named = soften(check_max("x", 2.0, 1.0, "V", "s", "m"), "generic", what="t_setup",
                   owner="U1")
    assert named.message.endswith("recording U1's t_setup makes it firm)")
    firm = soften(check_max("x", 2.0, 1.0, "V", "s", "m"), None)
    assert firm.status == "fail" and not warns_only(firm)


def test_a_soft_requirement_of_another_device_names_it(runs):
    # CIPO setup at U2 is against the controller's t_setup (mcu-3v3's, typical of its
    # class): the message says whose value recording makes it firm
    c = runs[None][("s", "cipo-setup", "U2", None)]
    assert c.status == "warn" and "recording U1's t_setup makes it firm" in c.message
    own = runs[None][("s", "copi-setup", "U2", None)]
    assert "recording the part's t_setup makes it firm" in own.message


#: A 1.8 V controller clocking a 3.3 V flash (invented): SCLK's high level never reaches
#: the flash's VIH, so its SCLK pulse checks have no time at all.
_XRAIL = """\
format = "pinlib.design/1"
title = "cross-rail SPI (invented test design)"
library = ["team"]

[[bus]]
id = "x"
protocol = "spi"
supply = "3.3 V"
clock = "4 MHz"
devices = [
  { ref = "U1", part = "mcu-1v8", role = "controller", supply = "1.8 V" },
  { ref = "U2", part = "FLASH" },
]
lines.sclk = { length = "5 cm", capacitance = "1.1 pF/cm" }
lines.copi = { length = "5 cm", capacitance = "1.1 pF/cm" }
lines.cipo = { length = "5 cm", capacitance = "1.1 pF/cm" }
lines.cs = { length = "5 cm", capacitance = "1.1 pF/cm" }
"""


@pytest.mark.parametrize("firm", [False, True])
def test_no_time_at_all_takes_the_firmness_of_the_threshold_not_crossed(tmp_path, firm):
    # the flash's VIH on SCLK, 0.7 VDD (the class's; restated under a datasheet basis in
    # the firm case): the SCLK level check and the pulse checks resting on it agree
    team = tmp_path / "team"
    team.mkdir()
    flash = "nor-flash-spi"
    if firm:
        flash = "firm-sclk-flash"
        (team / "f.toml").write_text(
            'format = "pinlib.part/1"\nid = "firm-sclk-flash"\n'
            'title = "flash, SCLK VIH recorded (invented test data)"\n'
            'extends = "nor-flash-spi"\n'
            'provenance = { basis = "datasheet", source = "test data, invented" }\n\n'
            '[pins.sclk]\nv_ih = "0.7 VDD"\n', "utf-8")
    (tmp_path / "d.toml").write_text(_XRAIL.replace("FLASH", flash), "utf-8")
    res = check_design(load_design(tmp_path / "d.toml")).bus("x")
    level = next(ln for ln in res.lines if ln.signal == "sclk").check("level-high")
    pulse = next(c for c in res.checks if c.id == "sclk-high")
    assert level.margin < 0 and pulse.value is None and "never crosses" in pulse.reason
    want = "fail" if firm else "warn"
    assert level.status == want and pulse.status == want
    assert ("limit_basis" in pulse.details) is not firm


def test_the_review_tables_say_why_beside_the_limit(tmp_path, monkeypatch):
    # the Markdown review prints no message beside its checks table: the limit cell says
    # why a check beyond it only warns
    from pinlib.cli import main

    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    _checks(tmp_path, None)
    assert main(["report", str(tmp_path / "d.toml"), "--md", str(tmp_path / "r.md")]) == 0
    text = (tmp_path / "r.md").read_text("utf-8")
    # the design's clock against nor-flash-spi's f_max (common practice, no source)
    assert "| 120 MHz | 104 MHz (a class's typical value) |" in text
    assert "the design warns (" in " ".join(text.split())


def test_the_summary_of_many_designs_counts_them_too(tmp_path, monkeypatch, capsys):
    from pinlib.cli import main

    monkeypatch.setenv("COLUMNS", "80")
    monkeypatch.delenv("PINLIB_LIBRARY", raising=False)
    _checks(tmp_path, None)
    other = tmp_path / "again.toml"
    other.write_text((tmp_path / "d.toml").read_text("utf-8"), "utf-8")
    assert main(["check", str(tmp_path / "d.toml"), str(other), "--jobs", "1"]) == 0
    out = capsys.readouterr().out
    assert out.count("for want of a datasheet value), 0 fail") == 2
    assert max(len(line) for line in out.splitlines()) <= 80
