"""The candidates of a position on push-pull buses (SPI, GPIO), their edges solved together.

Each candidate is evaluated by the engine (:func:`pinlib.engines.dispatch.evaluate_bus`
on the design with the part in the position), as :func:`pinlib.studies.candidates.
rank_candidates_slow` does, so every check and figure is the engine's.  What is batched
is the waveform solves, most of a push-pull evaluation's time: the candidates are taken
:data:`CHUNK` at a time (:data:`TOLERANCED_CHUNK` where a bus has tolerances,
:func:`chunk_size`), the inputs of every line analysis each will make are gathered
(:func:`pinlib.engines.pushpull.line_inputs`) and their edges solved together
(:func:`pinlib.engines.pushline.batchsolve.prefetch`, one solver call per chain of
sections and group of like time steps, each edge on its own grid) into a memo that
lives for the chunk, with the figures read off them
(:mod:`pinlib.engines.pushline.batchfigures`); the engine's analyses then take them
from there.  The engine runs for summaries only
(:func:`pinlib.engines.readout.summaries_only`): what only explains a result (a long
line's edges without the series resistor "auto" chose) is left out, every check and
figure the same.  The prefetch fits the candidates' driver pins together too
(:func:`pinlib.engines.pushline.drive.prefit`).  On a bus with tolerances, each
candidate's corners are searched from its own board as designed: those boards are
evaluated first, :data:`CORNER_CHUNK` candidates at a time, then the edges of all their
first corner boards (:func:`pinlib.engines.pushpull.corner_line_inputs`) solved
together, then each search.  Edges the prefetch leaves to the engine are solved one at
a time: a lumped line's (closed form), a record that had to be lengthened to settle,
the combined corners of a search over many parameters, and a series resistor "auto"
chose on a short line.
"""

from __future__ import annotations

from collections.abc import Callable, Iterator

from pinlib.core.errors import PinlibError
from pinlib.engines import memo
from pinlib.engines.dispatch import evaluate_bus, located_errors
from pinlib.engines.ppvariant import parameter_specs
from pinlib.engines.pushline.batchsolve import prefetch
from pinlib.engines.pushpull import corner_line_inputs, evaluate_board, line_inputs
from pinlib.engines.readout import summaries_only
from pinlib.library.schema import Part
from pinlib.model.design import Bus, Design

__all__ = ["CHUNK", "TOLERANCED_CHUNK", "CORNER_CHUNK", "chunk_size", "evaluate_batched",
           "batched_note"]

#: Candidates whose edges are solved together (and held in memory until their
#: evaluations end; ranking 1,000 SPI parts at the demo's display position peaks near
#: 215 MB of process at 512 a chunk, 145 MB at 256).  The more candidates, the more
#: edges each solver call takes (a call is one chain of sections and the steps within
#: ``batchsolve.STEP_RATIO`` of each other, parted by record length: 105 calls for
#: 1,000 candidates at the display position at 256 a chunk, 66 at 512, for about 5 %
#: of the ranking's time).
CHUNK = 512

#: The chunk where a bus of the position has tolerances: each candidate's boards as
#: designed keep their edges through its corner search, so a chunk holds its records
#: longer.  Ranking 1,000 generated SPI parts at the demo's flash position: 533 MB of
#: process and 20.7 ms a candidate at 512, 330 MB and 19.3 ms at 256, 254 MB and
#: 17.1-18.1 ms at 128, 222 MB and 17.9 ms at 64 (2026-12-05, CPU; at the display
#: position, without tolerances, 128 is 11 % slower than 512).
TOLERANCED_CHUNK = 128

#: Candidates whose corners' edges are solved together (a bus with tolerances: each
#: candidate's first corners, :func:`pinlib.engines.pushpull.corner_line_inputs`, about
#: four times its nominal board's edges, held until those candidates are done).
CORNER_CHUNK = 64


def evaluate_batched(design: Design, ref: str, parts: list[Part], buses: list[Bus],
                     tick: Callable[[], None] | None = None
                     ) -> Iterator[tuple[Part, list | PinlibError]]:
    """Each candidate's engine results on ``buses``, their edges solved in batches.

    Parameters
    ----------
    design : Design
        The design. [1]
    ref : str
        The position. [1]
    parts : list of Part
        The candidates. [1]
    buses : list of Bus
        Push-pull buses of the position (no bridging part). [1]
    tick : callable, optional
        Called as each candidate's evaluation ends (a progress bar: the results come
        a chunk at a time, after its memo is dropped). [1]

    Yields
    ------
    (Part, list of BusResult or PinlibError)
        In the order of ``parts``: the results in the order of ``buses`` (made for
        summaries only: every check's status and margin and every figure as the full
        engine's, some explanations shorter), or the error the design or an engine
        raised with the part in the position.
    """
    size = chunk_size(buses)
    for start in range(0, len(parts), size):
        chunk = parts[start:start + size]
        with memo.run_scope(), summaries_only():
            swapped, inputs = {}, []
            for p in chunk:
                try:
                    sw = swapped[p.id] = design.with_parts({ref: p.id}, keep_others=True)
                    for b in buses:
                        inputs += line_inputs(sw.bus(b.id), sw)
                except PinlibError:
                    continue  # the evaluation below meets it again and reports it
            prefetch(inputs)
            done = []  # yielded after the scope ends: no memo outlives the chunk
            for first in range(0, len(chunk), CORNER_CHUNK):
                done += _with_corners(design, ref, chunk[first:first + CORNER_CHUNK],
                                      buses, swapped, tick or (lambda: None))
        yield from done


def _with_corners(design: Design, ref: str, parts: list[Part], buses: list[Bus],
                  swapped: dict, tick: Callable[[], None]
                  ) -> list[tuple[Part, list | PinlibError]]:
    """Each candidate's results on ``buses``: the boards as designed first, then the
    edges of every candidate's first corners solved together, then the corners."""
    nominal: dict = {}
    ahead = []
    for p in parts:
        # the boards as designed, bus by bus, up to the first that the engine refuses
        sw, got, failed = None, [], None
        try:
            sw = swapped.get(p.id) or design.with_parts({ref: p.id}, keep_others=True)
            for b in buses:
                bus = sw.bus(b.id)
                with memo.transient(), located_errors(bus, sw):
                    got.append(evaluate_board(bus, sw))
                try:
                    ahead += corner_line_inputs(bus, sw, got[-1])
                except PinlibError:
                    pass  # the corner search meets it again and says where
        except PinlibError as err:
            failed = err
        nominal[p.id] = (sw, got, failed)
    done = []
    with memo.transient():  # the corners' edges go when these candidates are done
        prefetch(ahead)
        for p in parts:
            sw, boards, failed = nominal[p.id]
            try:
                with memo.transient():  # its own solves go with it
                    # each bus's corners before the next bus's board, as evaluate_bus
                    # takes them one bus at a time: the first error met is the same
                    results = [evaluate_bus(sw.bus(b.id), sw, nominal=n)
                               for b, n in zip(buses[:len(boards)], boards, strict=True)]
                done.append((p, failed if failed is not None else results))
            except PinlibError as err:
                done.append((p, err))
            tick()
    return done


def chunk_size(buses: list[Bus]) -> int:
    """Candidates a chunk takes at a position on ``buses``: :data:`TOLERANCED_CHUNK` where
    one of them has tolerances, else :data:`CHUNK`."""
    return TOLERANCED_CHUNK if any(parameter_specs(b) for b in buses) else CHUNK


def batched_note(bus: Bus, buses: list[Bus]) -> str:
    """What the ranking says of a push-pull bus whose candidates go this way (``buses``:
    the position's push-pull buses, which set the chunk)."""
    return (f"bus {bus.id}: each candidate evaluated by the {bus.protocol} engine, the "
            f"edges of up to {chunk_size(buses)} candidates solved together")
