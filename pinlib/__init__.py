"""pinlib: pin characteristics and bus budgets for board designers.

A library of part classes (TOML files, every value with its source), design
files that place parts on the I2C, SMBus, SPI and GPIO buses of a board, and
engines that check each bus at worst-case tolerances against the published
limits (pull-ups, edges, logic levels, SPI timing, lines and crosstalk).

From Python (``pinlib demo`` copies the demo design out of the package)::

    from pinlib.check import check_file

    result = check_file("pinlib-demo/workbooks/designs/demo-board.toml")
    print(result.status)              # "pass", "warn" or "fail"
    for where, signal, check in result.bus("sensors").all_checks():
        print(where, signal, check.id, check.status, check.source)
    document = result.to_json()       # the pinlib.result/1 document

Where to go next:

* :func:`pinlib.check.check_file`, :func:`pinlib.check.check_design`: a
  design's result; :func:`pinlib.model.design.load_design` reads a design to
  change before checking it;
* :func:`pinlib.library.load_library`: the built-in part classes and a
  team's folders;
* the ``pinlib`` command (``pinlib --help``): check, report, swap,
  candidates, parts, new, demo and workbench;
* :mod:`pinlib.widgets`: the workbooks' widgets, which need the notebook
  extra (``pip install 'pinlib[notebook]'``).

pinlib's figures are estimates for design review: confirm them by
measurement or simulation on the real board; the published standards, local
codes and licensed engineering practice prevail.
"""

__version__ = "0.1.0"
