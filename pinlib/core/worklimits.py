"""How much work one run of pinlib takes on: the limits, in one place, with their reasons.

A design file can ask for any amount of work: a bus of a hundred thousand devices, a
trace cut into ten thousand stretches, a Monte Carlo run of a billion boards.  Beyond
these limits a run would take minutes to hours or more memory than a workstation has,
and no board needs them; pinlib refuses such input at once with a
:class:`~pinlib.core.errors.PinlibError` that gives the number asked for and the limit
(the design loader names the file, line and field), rather than starting work that
would not finish.  Below them memory stays bounded: Monte Carlo draws its boards in
chunks (:data:`pinlib.studies.whatif.CHUNK`), and the waveform solver refuses a line
needing more time steps than :data:`pinlib.engines.pushline.MAX_TIME_STEPS`.

Each limit carries the measurement it rests on (``pinlib check`` on the shared two-CPU
development machine, with the fit store off; ``make bench`` prints the scaling lines).
"""

from __future__ import annotations

__all__ = ["MAX_BOARDS", "MAX_DEVICES_OPEN_DRAIN", "MAX_DEVICES_PUSH_PULL",
           "MAX_ROUTE_STRETCHES", "MAX_SECTIONS_PER_LINE", "MAX_COUPLED_STEPS"]

#: Devices on one I2C or SMBus bus, over all its segments.  A 10-bit address space has
#: 1024 addresses (published: I2C-bus specification UM10204, 10-bit addressing), so a
#: bus with more devices cannot address them all.  The open-drain engine's time grows
#: linearly with the devices (1,024 take about 1 s and 60 MB); 10^5 took 211 s.
MAX_DEVICES_OPEN_DRAIN = 1024

#: Devices on one SPI or GPIO bus.  Each SPI peripheral has its own chip select, and a
#: controller has a few dozen at most (common practice, no source).  The push-pull engine
#: checks every driver of a line into every other pin on it, so its time grows with the
#: square of the devices: 256 take about 2 s and 360 MB, 10^4 took 151 s and 10^5 never
#: finished.
MAX_DEVICES_PUSH_PULL = 256

#: Stretches (``sections``) of one trace or line.  A routed
#: trace changes layer, width or connector a handful of times (common practice, no
#: source).  The waveform of a line with a series resistor to choose is solved over all
#: its junctions with a time step below the shortest stretch's delay: 32 one-millimetre
#: stretches on each of four lines take about 2 s and 280 MB, 100 took 39 s and 2.6 GB, 10^4
#: tried to allocate 51 GiB.
MAX_SECTIONS_PER_LINE = 32

#: Stretches of one routed push-pull line (``route``): each device on the line is a
#: point of it, plus the junctions of its branches.  An SPI bus of a few dozen chip
#: selects on one shared line needs about twice as many stretches as devices (common
#: practice, no source); the tree solver's time grows with the stretches times the time
#: steps, and its step divides the shortest stretch's delay, as on a chain of sections.
MAX_ROUTE_STRETCHES = 64

#: Boards drawn by one Monte Carlo run.  Memory does not grow with it (the boards are
#: drawn :data:`pinlib.studies.whatif.CHUNK` at a time: 10^6 boards of the demo design
#: take about 390 MB and 24 s), but time does, linearly: 10^8 boards take about 40 minutes
#: with a progress bar and stop cleanly on Ctrl-C.  Beyond that, counts are better had from
#: several runs (seeds) added up.
MAX_BOARDS = 100_000_000

#: Time steps of one solve of a coupled pair (:mod:`pinlib.engines.crosstalk`).  The step
#: is the shorter of the run's delay and a fiftieth of the aggressor's ramp, over the
#: ramp and 150 ns after it: a 1 ns edge takes about 6,000 steps (0.2 s for both held
#: states), 100,000 steps about 4 s, and a search for the minimum spacing takes a few
#: such solves.  Only a run far shorter than its edge (a fraction of a millimetre) or an
#: edge under about 100 ps needs more; such a run couples little.
MAX_COUPLED_STEPS = 100_000
