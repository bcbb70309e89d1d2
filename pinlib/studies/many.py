"""Many designs at once: each checked on its own (in parallel processes when asked), with a
summary per design (status, check counts, what moved since its snapshot).

A design that cannot be loaded is reported with its error; the others are still
checked.  Work is spread over ``concurrent.futures.ProcessPoolExecutor`` workers, one
design a task; the results come back in the order of the paths given, whatever order
the workers finish in.
"""

from __future__ import annotations

import os
from dataclasses import field
from pathlib import Path

from pinlib.core.errors import PinlibError
from pinlib.core.progress import progress_bar
from pinlib.core.valueclass import value_class
from pinlib.model.result import status_counts
from pinlib.studies.designpaths import expand_designs

__all__ = ["DesignSummary", "SwapSummary", "check_one", "check_many", "default_jobs",
           "swap_in_design", "used_by", "expand_designs",
           "is_design_file"]


@value_class
class DesignSummary:
    """What one design's check came to.

    Attributes
    ----------
    path : str
        The design file as given.
    title : str or None
        The design's title (None when it could not be loaded).
    status : str
        ``pass``, ``warn``, ``fail``, or ``error`` (not loaded or not evaluated).
    soft : int
        Of the warnings, those for want of a datasheet value
        (:func:`pinlib.model.result.warns_beyond`).
    counts : dict
        Checks by status (``pass``, ``warn``, ``fail``).
    error : str or None
        The error's message when the design could not be checked.
    error_here : str or None
        The same message beside the design's name: a location in the design file itself
        as ``line N`` (:meth:`pinlib.core.errors.PinlibError.message_in`).
    result : dict or None
        The result as JSON (``pinlib.result/1``).
    changes : dict or None
        Against the design's snapshot, when asked and one exists: the change list as JSON.
    changes_text : str or None
        The same change list as text.
    snapshot : str or None
        ``"none"`` (no snapshot), ``"damaged"`` (named in ``error``-less ``notes``) or
        ``"compared"``; None when not asked.
    notes : list of str
        Warnings met on the way (a damaged snapshot).
    saved : str or None
        The snapshot written beside the design, when asked (after any comparison with
        the one it replaces).
    save_error : str or None
        Why that snapshot could not be written (the design was checked).
    """

    path: str
    title: str | None = None
    status: str = "error"
    counts: dict = field(default_factory=lambda: {"pass": 0, "warn": 0, "fail": 0})
    soft: int = 0
    error: str | None = None
    error_here: str | None = None
    result: dict | None = None
    changes: dict | None = None
    changes_text: str | None = None
    snapshot: str | None = None
    notes: list = field(default_factory=list)
    saved: str | None = None
    save_error: str | None = None

    @property
    def exit_code(self) -> int:
        if self.save_error is not None:
            return 2
        return {"error": 2, "fail": 1}.get(self.status, 0)


def check_one(path, library_folders=(), against_snapshots: bool = False,
              threshold: float | None = None, save: bool = False) -> DesignSummary:
    """Load and check one design; any :class:`PinlibError` becomes the summary's error.
    ``save``: write its snapshot beside it (atomically), after any comparison."""
    from pinlib.engines.dispatch import check_design
    from pinlib.model.design import load_design

    out = DesignSummary(str(path))
    try:
        design = load_design(path, library_folders=list(library_folders))
        out.title = design.title
        result = check_design(design)
    except PinlibError as err:
        out.error, out.error_here = err.message, err.message_in(path)
        return out
    out.status = result.status
    n = status_counts(c for b in result.results() for _, _, c in b.all_checks())
    out.counts = {s: n[s] for s in out.counts}
    out.soft = n["soft"]
    out.result = result.to_json()
    if against_snapshots:
        _against_snapshot(out, design, result, threshold)
    if save:
        from pinlib.studies.compare import save_snapshot

        try:
            out.saved = str(save_snapshot(design, result))
        except PinlibError as err:
            out.save_error = err.message
    return out


def _against_snapshot(out: DesignSummary, design, result, threshold) -> None:
    from pinlib.studies.compare import DEFAULT_THRESHOLD, compare_with_snapshot
    from pinlib.studies.snapshotfile import may_have_snapshot, snapshot_advice, snapshot_path

    if not may_have_snapshot(design):
        out.snapshot = "none"
        return
    damaged: list = []
    changes = compare_with_snapshot(design, result,
                                    DEFAULT_THRESHOLD if threshold is None else threshold,
                                    damaged=damaged)
    if changes is None:
        out.snapshot = "damaged" if damaged else "none"
        advice = snapshot_advice(snapshot_path(design), out.path)  # the design named
        out.notes += [err.with_hint(advice).message for err in damaged]
        return
    out.snapshot = "compared"
    out.changes = changes.to_json()
    out.changes_text = changes.format_text()


def default_jobs(n_designs: int) -> int:
    """The machine's cores (those this process may use), capped by the number of designs."""
    try:
        cores = len(os.sched_getaffinity(0))
    except (AttributeError, OSError):  # pragma: no cover - platforms without affinity
        cores = os.cpu_count() or 1
    return max(1, min(cores, n_designs))


def check_many(paths, library_folders=(), *, jobs: int | None = None,
               against_snapshots: bool = False, threshold: float | None = None,
               progress=None, save: bool = False) -> list[DesignSummary]:
    """Check every design of ``paths``; the summaries in the order of ``paths``.

    Parameters
    ----------
    jobs : int, optional
        Worker processes; None: :func:`default_jobs`.  With 1 (or one design) the
        designs are checked in this process.
    progress : bool, callable or None
        A bar counting designs (:func:`pinlib.core.progress.progress_bar`).
    save : bool
        Write each checked design's snapshot beside it (:func:`check_one`).
    """
    paths = [Path(p) for p in paths]
    jobs = default_jobs(len(paths)) if jobs is None else max(1, min(jobs, len(paths)))
    args = (tuple(str(f) for f in library_folders), against_snapshots, threshold, save)
    out: list[DesignSummary | None] = [None] * len(paths)
    if jobs == 1:
        with progress_bar(len(paths), desc="designs", unit="design", enabled=progress) as bar:
            for i, p in enumerate(paths):
                out[i] = check_one(p, *args)
                bar.update()
        return out  # type: ignore[return-value]
    import multiprocessing
    from concurrent.futures import ProcessPoolExecutor, as_completed

    # fork where there is one (the workers start with this process's library folders and
    # fit store, and import nothing again); the pool starts before the bar's thread does.
    methods = multiprocessing.get_all_start_methods()
    context = multiprocessing.get_context("fork" if "fork" in methods else None)
    pool = ProcessPoolExecutor(max_workers=jobs, mp_context=context,
                               initializer=_worker_ignores_ctrl_c)
    futures: dict = {}
    try:
        for i, p in enumerate(paths):
            futures[pool.submit(check_one, p, *args)] = i
        with progress_bar(len(paths), desc="designs", unit="design", enabled=progress) as bar:
            for fut in as_completed(futures):
                out[futures[fut]] = fut.result()
                bar.update()
    except BaseException:
        # Ctrl-C (or a worker lost): the designs not started are dropped, not waited for.
        # Each future is cancelled here: shutdown's own cancel_futures is carried out by
        # the pool's manager thread, which skips it once the pool object is gone — and
        # it goes as soon as this frame unwinds, so every design went on being checked
        # (and saved) after the command had said it stopped.
        for fut in futures:
            fut.cancel()
        pool.shutdown(wait=False, cancel_futures=True)
        raise
    pool.shutdown()
    return out  # type: ignore[return-value]


def _worker_ignores_ctrl_c() -> None:
    """A worker leaves Ctrl-C to the command (one line, exit 130), which stops the pool."""
    import signal

    signal.signal(signal.SIGINT, signal.SIG_IGN)


def used_by(part_id: str, paths, library_folders=(), *,
            found_in: list | None = None) -> tuple[list[dict], list[dict]]:
    """Every position of every design where ``part_id`` stands, placed as itself or as a
    part that extends it (at any depth).  Each design is read with its own ``library``
    line; ``found_in``, when given, gets the path of each design whose library holds
    ``part_id`` (placed or not).

    Returns
    -------
    (uses, errors)
        ``uses``: one dict a position (``path``, ``design``, ``bus``, ``ref`` — a
        device's reference, or ``cable`` / ``line NAME`` / ``trace`` for a cable class —,
        ``part``, and ``via``: the chain from the placed part up to ``part_id``);
        ``errors``: ``{path, error}`` for each design that could not be loaded.
    """
    from pinlib.model.design import load_design

    uses: list[dict] = []
    errors: list[dict] = []
    for path in paths:
        try:
            design = load_design(path, library_folders=list(library_folders))
        except PinlibError as err:
            errors.append({"path": str(path), "error": err.message})
            continue
        lib = design.library
        if found_in is not None and part_id in lib.files:
            found_in.append(str(path))
        for bus, ref, placed in _placements(design):
            chain = lib.chain(placed) if placed in lib.files else [placed]
            if part_id in chain:
                uses.append({"path": str(path), "design": design.title, "bus": bus,
                             "ref": ref, "part": placed,
                             "via": chain[:chain.index(part_id) + 1]})
    return uses, errors


def _placements(design):
    """(bus id, position, part id) of every part placed in the design, each once."""
    seen = set()
    for bus in design.buses:
        rows = [(d.ref, d.part_id) for d in bus.devices]
        for seg in bus.segments:
            rows += [("cable", c.part_id) for c in seg.cables]
            rows += [("trace", s.part_id) for s in seg.sections if s.part_id]
        for name, line in bus.lines.items():
            rows += [(f"line {name}", s.part_id) for s in line.sections if s.part_id]
        for ref, pid in rows:
            if (bus.id, ref, pid) not in seen:
                seen.add((bus.id, ref, pid))
                yield bus.id, ref, pid


def is_design_file(path) -> bool:
    """A file whose first 4 kB name the design format (part files and snapshots do not)."""
    try:
        with open(path, encoding="utf-8", errors="replace") as f:
            head = f.read(4096)
    except OSError:
        return False
    return "pinlib.design/1" in head


@value_class
class SwapSummary:
    """One design under a substitution of part ids (``{old: new}``) at every position.

    ``status`` is ``swapped`` (evaluated before and after), ``refused`` (a position where
    the new part cannot serve: ``refused`` holds each position's reasons, nothing is
    evaluated), ``unused`` (no old part stands in it) or ``error`` (not loaded).  A
    swapped design that ``--write`` could not write keeps its changes, with
    ``write_error``.  ``design`` is the loaded design (for writing the file), not kept in JSON.
    """

    path: str
    status: str = "error"
    title: str | None = None
    swaps: dict = field(default_factory=dict)        # ref -> new part id
    olds: dict = field(default_factory=dict)         # ref -> old part id
    refused: list = field(default_factory=list)      # {ref, old, new, reasons}
    before: str | None = None                        # statuses of the whole design
    after: str | None = None
    changes: object = None                           # a ChangeList
    error: str | None = None
    written: bool = False
    write_error: str | None = None                   # why --write could not write it
    extended: dict = field(default_factory=dict)     # unused: old id -> ["U2 eeprom-x"]
    design: object = None

    @property
    def exit_code(self) -> int:
        if self.status in ("error", "refused") or self.write_error is not None:
            return 2
        return 1 if self.after == "fail" else 0

    def to_json(self) -> dict:
        out = {"path": self.path, "status": self.status, "design": self.title,
               "positions": [{"ref": r, "old": self.olds[r], "new": n}
                             for r, n in self.swaps.items()]}
        if self.status == "error":
            out["error"] = self.error
        if self.refused:
            out["refused"] = self.refused
        if self.extended:
            out["extended"] = self.extended
        if self.status == "swapped":
            out.update(before=self.before, after=self.after, written=self.written,
                       changes=self.changes.to_json())
            if self.write_error is not None:
                out["write_error"] = self.write_error
        return out


def _extending(design, parts: dict[str, str]) -> dict[str, list[str]]:
    """For each old part id that stands in the design only as a class its placed parts
    extend: those positions (``U2 eeprom-x``), which ``--part`` does not change."""
    lib = design.library
    out: dict[str, list[str]] = {}
    for bus in design.buses:
        for d in bus.devices:
            if d.part_id not in lib.files:
                continue
            for old in lib.chain(d.part_id)[1:]:
                where = f"{d.ref} {d.part_id}"
                if old in parts and where not in out.setdefault(old, []):
                    out[old].append(where)
    return out


def swap_in_design(path, parts: dict[str, str], library_folders=(),
                   threshold: float | None = None) -> SwapSummary:
    """Put ``parts[old]`` at every position of the design where ``old`` stands, when the
    new part can serve each of them (:func:`pinlib.studies.compare.swap_refusals`), and
    compare the design's results before and after."""
    from pinlib.engines.dispatch import check_design
    from pinlib.model.design import load_design
    from pinlib.studies.compare import DEFAULT_THRESHOLD, compare, snapshot, swap_refusals

    out = SwapSummary(str(path))
    try:
        design = load_design(path, library_folders=list(library_folders))
        out.title, out.design = design.title, design
        for bus in design.buses:
            for d in bus.devices:
                if d.part_id in parts and d.ref not in out.swaps:
                    out.swaps[d.ref], out.olds[d.ref] = parts[d.part_id], d.part_id
        if not out.swaps:
            out.status = "unused"
            out.extended = _extending(design, parts)
            return out
        for ref, new in out.swaps.items():
            old, reasons = swap_refusals(design, ref, new, field="--part")
            if reasons:
                out.refused.append({"ref": ref, "old": old, "new": new, "reasons": reasons})
        if out.refused:
            out.status = "refused"
            return out
        before = check_design(design)
        after_design = design.with_parts(out.swaps)
        after = check_design(after_design)
    except PinlibError as err:
        out.status, out.error = "error", err.message
        return out
    out.status, out.before, out.after = "swapped", before.status, after.status
    out.changes = compare(snapshot(design, before), snapshot(after_design, after),
                          threshold=DEFAULT_THRESHOLD if threshold is None else threshold)
    return out
