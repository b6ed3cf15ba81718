"""Builders: rooms, windows, airflows, buffer spaces, ground and the ISO 13790 template,
composed from :mod:`thermonet.network` calls. Every name in the ``__all__`` of the modules
is here; :mod:`thermonet.builders.room` describes the model and lists the modules."""

from thermonet.builders.airflow import (  # noqa: F401
    add_buffer_exchange,
    add_infiltration,
    add_ventilation,
    add_window_opening,
    infiltration_rate,
    night_ventilation,
)
from thermonet.builders.common import META_KEY  # noqa: F401
from thermonet.builders.elements import Adjacent, Element  # noqa: F401
from thermonet.builders.ground import (  # noqa: F401
    SLAB_SOIL_DEPTH_FACTOR,
    SOIL_CLAY_SILT,
    SOIL_ROCK,
    SOIL_SAND_GRAVEL,
    Soil,
    basement_wall_soil_depth,
    iso13370_basement_wall_u_value,
    iso13370_slab_u_value,
    slab_soil_depth,
)
from thermonet.builders.records import Room, rooms  # noqa: F401
from thermonet.builders.room import add_buffer, add_room  # noqa: F401
from thermonet.builders.surfaces import (  # noqa: F401
    EXTERNAL_RADIATIVE_COEFFICIENT_BLACK,
    heat_flow_direction,
    surface_coefficients,
)
from thermonet.builders.templates import (  # noqa: F401
    H_IS,
    H_MS,
    LAMBDA_AT,
    MASS_CLASSES,
    Iso13790Parameters,
    Iso13790Zone,
    add_iso13790_zone,
    iso13790_from_room,
    iso13790_parameters,
    iso13790_zones,
)
from thermonet.builders.windows import (  # noqa: F401
    AddedWindow,
    Door,
    Window,
    add_window,
    window_solar_gain,
    window_u_value,
)

__all__ = [
    "AddedWindow",
    "Adjacent",
    "Door",
    "EXTERNAL_RADIATIVE_COEFFICIENT_BLACK",
    "Element",
    "H_IS",
    "H_MS",
    "Iso13790Parameters",
    "Iso13790Zone",
    "LAMBDA_AT",
    "MASS_CLASSES",
    "META_KEY",
    "Room",
    "SLAB_SOIL_DEPTH_FACTOR",
    "SOIL_CLAY_SILT",
    "SOIL_ROCK",
    "SOIL_SAND_GRAVEL",
    "Soil",
    "Window",
    "add_buffer",
    "add_buffer_exchange",
    "add_infiltration",
    "add_iso13790_zone",
    "add_room",
    "add_ventilation",
    "add_window",
    "add_window_opening",
    "basement_wall_soil_depth",
    "heat_flow_direction",
    "infiltration_rate",
    "iso13370_basement_wall_u_value",
    "iso13370_slab_u_value",
    "iso13790_from_room",
    "iso13790_parameters",
    "iso13790_zones",
    "night_ventilation",
    "rooms",
    "slab_soil_depth",
    "surface_coefficients",
    "window_solar_gain",
    "window_u_value",
]
