"""Controls for long choices: a dropdown's whole choice on a line under it, a list with
its button under it (the control column is narrower than a part's label)."""

from __future__ import annotations

import ipywidgets as W

from pinlib.present.widgets.common import COLUMN_WIDTH, LABEL_WIDTH, _label_of
from pinlib.present.widgets.markup import BLOCK, e


def with_button_below(control, button) -> W.VBox:
    """A list, the dropdown parts are picked from or a file name, with its button under
    it at the right: the control keeps the column's width (a button beside it left too
    little room for an item such as "U2 display-controller-spi sclk", 108 px of a
    dropdown for "board-to-board-connector", 136 px of a path).  Its description is a
    field's (:data:`~pinlib.present.widgets.common.LABEL_WIDTH`), so it starts where
    every other field does (a narrower one set it 46 px to the left)."""
    control.style.description_width = f"{LABEL_WIDTH}px"
    return W.VBox([control, W.HBox([button], layout=W.Layout(
        width="auto", justify_content="flex-end", max_width=f"{COLUMN_WIDTH}px"))],
        layout=W.Layout(width="auto"))


def choice_line(dropdown) -> W.HTML:
    """A line under a dropdown with its choice's whole text, kept up to date.

    A part's label (``mcu-3v3 — Microcontroller, 3.3 V ...``) is longer than a closed
    dropdown in the control column shows; the list, when open, shows it whole.  The
    line is indented to start under the dropdown and wraps; the text is also the
    control's tooltip (on its description)."""
    line = W.HTML(layout=W.Layout(width="auto", max_width=f"{COLUMN_WIDTH}px"))

    def show(change=None):
        text = "" if dropdown.value is None else _label_of(dropdown.options, dropdown.value)
        dropdown.tooltip = text or None
        line.value = (f'<div class="pinlib-choice" style="{BLOCK};font-size:11px;'
                      f'color:#4a4a4a;padding-left:{LABEL_WIDTH + 4}px">{e(text)}</div>'
                      if text else "")

    dropdown.observe(show, names=["value", "options"])
    show()
    return line
