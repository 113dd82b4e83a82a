"""The RC-hold frame: the shunt option (the device laws it composes are tested in test_devices.py)."""
from __future__ import annotations

import pytest

from tradeoff.errors import DesignKeyError
from tradeoff.topologies.base import Design
from tradeoff.topologies.hold_state import shunt_ohm


def test_shunt_option_parsing():
    assert shunt_ohm(Design("rc-darlington", options={"shunt": "10 Mohm"})) == pytest.approx(1e7)
    assert shunt_ohm(Design("rc-darlington", options={})) is None
    with pytest.raises(DesignKeyError, match=r"options\.shunt: .*; accepted: a resistance \('10 Mohm'\) or none$") as caught:
        shunt_ohm(Design("rc-darlington", options={"shunt": "10 furlongs"}))
    assert caught.value.path == ("options", "shunt")  # the design loader places it at that key
    with pytest.raises(DesignKeyError, match="not a positive resistance"):
        shunt_ohm(Design("rc-darlington", options={"shunt": -5.0}))
