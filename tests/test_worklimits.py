"""Bounded work: the limits of pinlib.core.worklimits refuse at once (issue 14, item 8).

Each limit is met through the code a user runs: the design loader names the file, line
and field and gives the number asked for with the limit; the command exits 2; Monte
Carlo keeps its memory whatever the number of boards; Ctrl-C ends a long run with exit
130 and no traceback.
"""

from __future__ import annotations

import os
import signal
import subprocess
import sys
import time
import tracemalloc
from pathlib import Path

import pytest

from pinlib.check import check_file
from pinlib.cli import main
from pinlib.core import worklimits
from pinlib.core.errors import DesignError, InputError
from pinlib.model.design import load_design
from pinlib.studies import whatif

ROOT = Path(__file__).resolve().parents[1]
DEMO = ROOT / "workbooks" / "designs" / "demo-board.toml"

HEAD = """\
format = "pinlib.design/1"
title = "work limits (invented test data)"

[board.geometry.g]
kind = "microstrip"
width = "0.2 mm"
height = "0.18 mm"
er = 4.2
"""


def spi(n_devices: int, sclk: str = '{ length = "3 cm", geometry = "g" }') -> str:
    devices = "".join(f'  {{ ref = "P{i}", part = "nor-flash-spi" }},\n'
                      for i in range(n_devices - 1))
    return HEAD + f"""
[[bus]]
id = "s"
protocol = "spi"
clock = "10 MHz"
supply = "3.3 V"
devices = [
  {{ ref = "U1", part = "mcu-3v3", role = "controller" }},
{devices}]
lines.sclk = {sclk}
"""


def i2c_segments(per_segment: int) -> str:
    def segment(k):
        devices = "".join(f'  {{ ref = "T{k}-{i}", part = "eeprom-i2c" }},\n'
                          for i in range(per_segment))
        ctrl = '  { ref = "U1", part = "mcu-3v3", role = "controller" },\n' if k == 0 else ""
        return f"""
[[bus.segment]]
id = "seg{k}"
trace = {{ length = "5 cm", geometry = "g" }}
devices = [
{ctrl}{devices}]
"""
    return HEAD + """
[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
""" + segment(0) + segment(1)


def _write(tmp_path, text, name="design.toml"):
    path = tmp_path / name
    path.write_text(text, encoding="utf-8")
    return path


def _line_of(text: str, needle: str) -> int:
    return next(i for i, line in enumerate(text.splitlines(), 1) if needle in line)


def test_a_push_pull_bus_over_the_device_limit_is_refused_where_it_is_written(tmp_path):
    n = worklimits.MAX_DEVICES_PUSH_PULL + 1
    text = spi(n)
    path = _write(tmp_path, text)
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.file == str(path) and err.field == "bus[0].devices"
    assert err.line == _line_of(text, "devices = [")
    assert f"{n:,}" in err.message and f"{worklimits.MAX_DEVICES_PUSH_PULL:,}" in err.message


def test_the_device_limit_counts_every_segment_of_an_open_drain_bus(tmp_path):
    per = worklimits.MAX_DEVICES_OPEN_DRAIN // 2  # with the controller: one over the limit
    with pytest.raises(DesignError) as info:
        load_design(_write(tmp_path, i2c_segments(per)))
    assert f"{2 * per + 1:,}" in info.value.message
    assert info.value.field == "bus[0].segment"


def test_a_bus_at_the_device_limit_loads(tmp_path):
    design = load_design(_write(tmp_path, spi(worklimits.MAX_DEVICES_PUSH_PULL)))
    assert len(design.buses[0].devices) == worklimits.MAX_DEVICES_PUSH_PULL


def _sections(n: int) -> str:
    return ", ".join(['{ length = "1 mm", geometry = "g" }'] * n)


def test_a_trace_over_the_section_limit_is_refused_before_any_is_built(tmp_path):
    limit = worklimits.MAX_SECTIONS_PER_LINE
    text = spi(2, f"{{ sections = [{_sections(10 * limit)}], series_resistor = \"auto\" }}")
    path = _write(tmp_path, text)
    with pytest.raises(DesignError) as info:
        load_design(path)
    err = info.value
    assert err.field == "bus[0].lines.sclk.sections" and err.file == str(path)
    assert err.line == _line_of(text, "lines.sclk")
    assert f"{10 * limit:,}" in err.message and f"{limit:,}" in err.message


def test_a_trace_at_the_section_limit_loads(tmp_path):
    limit = worklimits.MAX_SECTIONS_PER_LINE
    design = load_design(_write(tmp_path, spi(2, f"{{ sections = [{_sections(limit)}] }}")))
    assert len(design.buses[0].lines["sclk"].sections) == limit


def test_the_command_refuses_with_exit_2_and_names_the_file(tmp_path, capsys):
    path = _write(tmp_path, spi(worklimits.MAX_DEVICES_PUSH_PULL + 5))
    assert main(["check", str(path)]) == 2
    err = capsys.readouterr().err
    assert str(path) in err and "Traceback" not in err
    with pytest.raises(DesignError):
        check_file(path)


def test_too_many_boards_gives_the_number_and_the_limit(tmp_path):
    design = load_design(DEMO)
    with pytest.raises(InputError) as info:
        whatif.monte_carlo(design, 10 * worklimits.MAX_BOARDS)
    assert f"{10 * worklimits.MAX_BOARDS:,}" in info.value.message
    assert f"{worklimits.MAX_BOARDS:,}" in info.value.message
    assert whatif.MAX_BOARDS == worklimits.MAX_BOARDS  # one place


def test_monte_carlo_memory_does_not_grow_with_the_boards(tmp_path, monkeypatch):
    # Sensitivities keep the first SENSITIVITY_BOARDS boards' draws; made small here so
    # that every board beyond them goes through chunks that are dropped.
    monkeypatch.setattr(whatif.montecarlo, "SENSITIVITY_BOARDS", 500)
    design = load_design(_write(tmp_path, HEAD + """
[[bus]]
id = "b"
protocol = "i2c"
supply = "3.3 V"
supply_tolerance = "5 %"
pullup = "2.2 kΩ"
pullup_tolerance = "5 %"
capacitance_tolerance = "10 %"
trace = { length = "10 cm", geometry = "g" }
devices = [
  { ref = "U1", part = "mcu-3v3", role = "controller" },
  { ref = "U2", part = "eeprom-i2c" },
]
"""))

    def peak(n):
        tracemalloc.start()
        try:
            whatif.monte_carlo(design, n, seed=1, chunk=2000)
            return tracemalloc.get_traced_memory()[1]
        finally:
            tracemalloc.stop()

    small, large = peak(4_000), peak(40_000)
    # ten times the boards: the same chunks, so the same peak (within a third)
    assert large < 1.33 * small, (small, large)


def _wait_for_cpu(pid: int, cpu_seconds: float, *, deadline: float) -> None:
    """Return once process ``pid`` has used ``cpu_seconds`` of CPU (user + system), or
    after ``deadline`` seconds of wall time."""
    tick = os.sysconf("SC_CLK_TCK")
    end = time.monotonic() + deadline
    while time.monotonic() < end:
        try:
            fields = Path(f"/proc/{pid}/stat").read_text().rsplit(")", 1)[1].split()
        except OSError:
            return  # gone already: the assertions below say why
        if (int(fields[11]) + int(fields[12])) / tick >= cpu_seconds:
            return
        time.sleep(0.05)


@pytest.mark.skipif(not Path("/proc/self/stat").exists(), reason="SIGINT to a child process")
def test_ctrl_c_stops_a_long_run_cleanly():
    cmd = [sys.executable, "-m", "pinlib", "check", str(DEMO), "--monte-carlo", "20000000"]
    env = {**os.environ, "PINLIB_CACHE_DIR": "off"}
    proc = subprocess.Popen(cmd, stdout=subprocess.PIPE, stderr=subprocess.PIPE, text=True,
                            env=env)
    # wait until the child has spent CPU time past its imports and into the first chunks
    # (CPU time, not wall time: a loaded machine slows both alike)
    _wait_for_cpu(proc.pid, 2.0, deadline=60.0)
    proc.send_signal(signal.SIGINT)
    out, err = proc.communicate(timeout=60)
    assert proc.returncode == 130, err
    assert "Traceback" not in err and "interrupted" in err


def test_an_interrupt_a_library_turns_into_another_error_still_ends_cleanly(monkeypatch,
                                                                            capsys):
    # numpy's np.unique(..., axis=0) reported Ctrl-C landing in its comparison as a
    # TypeError ("Cannot compare structured arrays..."): the command ended with a
    # traceback and exit 1, not the one line and 130 of any other interrupt
    import os
    import signal

    import pinlib.cli as cli

    def run(argv):
        try:
            os.kill(os.getpid(), signal.SIGINT)
            for _ in range(1000):  # the handler runs between bytecodes
                pass
        except KeyboardInterrupt:
            raise TypeError("Cannot compare structured arrays") from None
        return 0

    monkeypatch.setattr(cli, "_main", run)
    assert cli.main([]) == 130
    err = capsys.readouterr().err
    assert err.strip().splitlines() == [err.strip()] and "interrupted" in err.lower()
    assert signal.getsignal(signal.SIGINT) is signal.default_int_handler  # put back

    def broken(argv):
        raise TypeError("a real bug")  # without Ctrl-C an error is still an error

    monkeypatch.setattr(cli, "_main", broken)
    with pytest.raises(TypeError):
        cli.main([])
