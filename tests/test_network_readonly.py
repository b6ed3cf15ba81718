"""A network cannot be changed behind its back: elements are read-only once added.

Editing ``net.nodes[...]`` or ``net.links[...]`` after ``add_*`` used to bypass every check
(a negative conductance came back as "no path to boundary", a changed airflow conductance
no longer matched its flow). Now each such edit raises ReadOnlyError naming the element
and the ``add_*`` call that takes the new value; pickling, deep copies and model files
still round-trip.
"""

from __future__ import annotations

import copy
import pickle

import numpy as np
import pandas as pd
import pytest

import thermonet as tn
from thermonet.errors import ReadOnlyError
from thermonet.io import models as io

IDX = pd.date_range("2025-01-01 01:00", periods=48, freq="h", tz="Etc/GMT-1")


def full_network() -> tn.Network:
    """Invented network with one element of every kind."""
    net = tn.Network("every kind")
    net.add_boundary("outdoor", temperature="temp_air")
    net.add_boundary("neighbour", temperature=pd.Series(20.0, index=IDX))
    net.add_node("room", kind="air", capacitance=2e5, volume=60.0)
    net.add_node("wall", kind="mass", capacitance=4e6)
    net.add_link("outdoor", "wall", conductance=30.0, path="opaque")
    net.add_link("wall", "room", conductance=120.0, path="internal")
    net.add_link("neighbour", "room", conductance=10.0, path="party wall")
    net.add_airflow("outdoor", "room", ach=0.5, path="infiltration")
    net.add_radiation("wall", "room", area=10.0, path="radiation")
    win = net.add_airflow("outdoor", "room", flow_m3h=200.0, path="ventilation", name="window")
    net.add_source("room", power=300.0, path="internal")
    net.add_thermostat("room", heating_setpoint=20.0, cooling_setpoint=26.0)
    net.add_switch(on=tn.above("room", 24.0), links={win: (0.0, 1.0)})
    return net


EDITS = [
    ("nodes", "room", "capacitance", -1.0, "node 'room' .*add_node"),
    ("nodes", "room", "kind", "mass", "node 'room' .*add_node"),
    ("boundaries", "outdoor", "temperature", "temp_dew", "boundary 'outdoor' .*add_boundary"),
    ("links", "outdoor-wall:opaque", "conductance", -5.0, "link 'outdoor-wall:opaque' .*add_link"),
    ("links", "window", "a", "wall", "link 'window' .*add_airflow"),
    ("sources", "room:internal", "power", 1e9, "source 'room:internal' .*add_source"),
    ("thermostats", "thermostat:room", "heating_setpoint", 30.0,
     "thermostat 'thermostat:room' .*add_thermostat"),
    ("switches", "switch", "initial", True, "switch 'switch' .*add_switch"),
]


@pytest.mark.parametrize("table, name, attr, value, match", EDITS)
def test_setting_an_attribute_of_an_added_element_is_refused(table, name, attr, value, match):
    net = full_network()
    rec = getattr(net, table)[name]
    before = getattr(rec, attr)
    with pytest.raises(ReadOnlyError, match=match + f".*{attr}"):
        setattr(rec, attr, value)
    with pytest.raises(ReadOnlyError, match="read-only"):
        delattr(rec, attr)
    assert getattr(rec, attr) is before


@pytest.mark.parametrize("table", ["nodes", "boundaries", "links", "sources", "thermostats",
                                   "switches"])
def test_the_element_tables_are_read_only(table):
    net = full_network()
    t = getattr(net, table)
    key = next(iter(t))
    n = len(t)
    for edit in (lambda: t.__setitem__(key, t[key]), lambda: t.__delitem__(key),
                 lambda: t.pop(key), lambda: t.clear(), lambda: t.update({}),
                 lambda: t.setdefault("x", None), lambda: t.popitem()):
        with pytest.raises(ReadOnlyError, match=f"net.{table} is read-only.*net.add_"):
            edit()
    assert len(t) == n


def test_parameter_dicts_of_links_and_switches_are_read_only():
    net = full_network()
    with pytest.raises(ReadOnlyError, match="link 'window' params"):
        net.links["window"].params["flow_m3h"] = 1.0
    with pytest.raises(ReadOnlyError, match="switch 'switch' link factors"):
        net.switches["switch"].link_factors["window"] = (1.0, 1.0)
    assert net.links["window"].params["flow_m3h"] == 200.0


def test_copies_pickles_and_model_files_round_trip():
    net = full_network()
    w = pd.DataFrame({"temp_air": 5.0 + np.sin(np.arange(48) / 5.0)}, index=IDX)
    ref = tn.simulate(net, w, warmup_days=0.5).temperatures
    for other in (copy.deepcopy(net), pickle.loads(pickle.dumps(net)),
                  io.loads(io.dumps(net)), copy.copy(net)):
        assert list(other.links) == list(net.links)
        with pytest.raises(ReadOnlyError):
            other.links["window"].conductance = 1.0
        with pytest.raises(ReadOnlyError):
            other.nodes["x"] = other.nodes["room"]
        pd.testing.assert_frame_equal(tn.simulate(other, w, warmup_days=0.5).temperatures,
                                      ref)


def test_building_a_new_network_is_the_way_to_change_a_value():
    net = full_network()
    new = tn.Network("changed")
    for b in net.boundaries.values():
        new.add_boundary(b.name, temperature=b.temperature, kind=b.kind)
    for n in net.nodes.values():
        new.add_node(n.name, kind=n.kind, capacitance=n.capacitance * 2, volume=n.volume)
    assert new.nodes["room"].capacitance == 2 * net.nodes["room"].capacitance
