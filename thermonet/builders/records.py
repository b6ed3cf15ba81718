"""The record of a zone built by :func:`thermonet.builders.add_room` (:class:`Room`), kept as
plain JSON in ``net.meta["builders"]["rooms"]`` so that it travels with model files, and
:func:`rooms`, which gives the records back."""

from __future__ import annotations

from dataclasses import dataclass, field

from thermonet.builders.common import META_KEY, meta_section
from thermonet.errors import NetworkError
from thermonet.network import Network

__all__ = ["Room", "rooms"]

#: Fields of a :class:`Room` kept in ``net.meta`` (all but the name, which is the key).
ROOM_FIELDS = ("air", "star", "heated", "floor_area", "height", "volume", "outdoor", "nodes",
               "surfaces", "areas", "elements", "soil_nodes", "links", "sources", "switches",
               "u_values")


@dataclass
class Room:
    """What :func:`~thermonet.builders.add_room` created (names of one zone's parts).

    Attributes
    ----------
    name, air, star : str
        Zone name, air node (same as the zone name), radiant star node.
    heated : bool
    floor_area, height, volume : float
        [m²], [m], [m³].
    outdoor : str
        Name of the outdoor-air boundary.
    nodes : list of str
        The zone's control volume: air, star and all nodes of its own elements (not soil).
    surfaces : dict
        Element or window name -> inside surface node.
    areas : dict
        Element (net opaque) or window name -> area [m²].
    elements : dict
        Element name -> list of its nodes (inside surface first, outside surface last).
    soil_nodes : list of str
    links, sources, switches : list of str
        Everything created for this zone, including later airflows and gains.
    u_values : dict
        Element or window name -> ISO 6946 U-value used [W/(m²K)] (for information).
    """

    name: str
    air: str
    star: str
    heated: bool
    floor_area: float
    height: float
    volume: float
    outdoor: str
    nodes: list = field(default_factory=list)
    surfaces: dict = field(default_factory=dict)
    areas: dict = field(default_factory=dict)
    elements: dict = field(default_factory=dict)
    soil_nodes: list = field(default_factory=list)
    links: list = field(default_factory=list)
    sources: list = field(default_factory=list)
    switches: list = field(default_factory=list)
    u_values: dict = field(default_factory=dict)

    def __repr__(self):
        kind = "heated zone" if self.heated else "buffer space"
        return (f"Room({self.name!r}, {kind}, {self.floor_area:g} m², {len(self.nodes)} nodes, "
                f"{len(self.links)} links, {len(self.sources)} sources)")


#: Key of ``net.meta`` under which builders keep their records (plain JSON, so they travel


def keep_room(net: Network, rec: Room) -> None:
    """Record ``rec`` in ``net.meta`` sharing its lists and dicts, so later additions
    (airflows, gains) appear in the record too.

    Parameters
    ----------
    net : Network
    rec : Room
    """
    meta_section(net, "rooms")[rec.name] = {k: getattr(rec, k) for k in ROOM_FIELDS}


def rooms(net: Network) -> dict[str, Room]:
    """The zones built by :func:`~thermonet.builders.add_room` or ``add_buffer``, by name.

    The records live in ``net.meta["builders"]["rooms"]`` as plain JSON and are written to
    model files by :func:`thermonet.io.save_model`, so a loaded model still knows which
    nodes, links and sources make up each room (e.g. for ``res.balance(room.nodes)``).
    The returned :class:`Room` objects share their lists with the record: airflows and
    gains added to them later are recorded as well.

    Parameters
    ----------
    net : Network

    Returns
    -------
    dict of str to Room
        Empty when no room was built.

    Raises
    ------
    NetworkError
        If a record is malformed (e.g. edited by hand); the message names the room and key.
    """
    section = (getattr(net, "meta", None) or {}).get(META_KEY, {}).get("rooms", {})
    out = {}
    for name, d in section.items():
        if not isinstance(d, dict):
            raise NetworkError(f"net.meta['{META_KEY}']['rooms'][{name!r}] must be an object "
                               f"with keys {list(ROOM_FIELDS)}")
        missing = [k for k in ROOM_FIELDS if k not in d]
        if missing:
            raise NetworkError(f"net.meta['{META_KEY}']['rooms'][{name!r}] lacks {missing}; "
                               "rebuild the room with add_room")
        unknown = [n for n in d["nodes"] if n not in net.nodes]
        if unknown:
            raise NetworkError(f"room {name!r}: its record names node(s) {unknown[:5]} that "
                               "are not in the network; the record is stale — rebuild the room")
        out[name] = Room(name, **{k: d[k] for k in ROOM_FIELDS})
    return out

