"""pinlib.core.collector: objects set aside from the cyclic collector for a block."""

from __future__ import annotations

import gc

from pinlib.core.collector import older_objects_aside


class _Node:
    def __init__(self):
        self.me = self  # a reference cycle: only the cyclic collector frees it


def test_objects_set_aside_for_the_block_only():
    assert gc.isenabled() and gc.get_freeze_count() == 0
    with older_objects_aside() as aside:
        assert aside
        assert gc.get_freeze_count() > 0  # every object from before the block
    assert gc.get_freeze_count() == 0


def test_cycles_made_inside_the_block_are_still_collected():
    with older_objects_aside():
        gc.collect()
        _Node()  # garbage at once
        # common practice, no source: a cycle made in the block is found by a collection
        assert gc.collect() >= 1


def test_a_callers_own_freeze_and_a_disabled_collector_are_left_alone():
    gc.freeze()
    try:
        frozen = gc.get_freeze_count()
        with older_objects_aside() as aside:
            assert not aside
        assert gc.get_freeze_count() == frozen  # not undone by the block's end
    finally:
        gc.unfreeze()
    gc.disable()
    try:
        with older_objects_aside() as aside:
            assert not aside and gc.get_freeze_count() == 0
    finally:
        gc.enable()
