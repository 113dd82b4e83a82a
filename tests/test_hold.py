"""The RC-hold frame: the shunt option (the device laws it composes are tested in test_devices.py)."""
from __future__ import annotations

import pytest

from tradeoff.errors import DesignError
from tradeoff.topologies.base import Design
from tradeoff.topologies.hold_state import shunt_ohm


def test_shunt_option_parsing():
    assert shunt_ohm(Design("rc-darlington", options={"shunt": "10 Mohm"})) == pytest.approx(1e7)
    assert shunt_ohm(Design("rc-darlington", options={})) is None
    with pytest.raises(DesignError, match=r"options\.shunt: .*accepted: a resistance"):
        shunt_ohm(Design("rc-darlington", options={"shunt": "10 furlongs"}))
    with pytest.raises(DesignError, match="not a positive resistance"):
        shunt_ohm(Design("rc-darlington", options={"shunt": -5.0}))
