"""thermonet: hourly lumped-RC thermal networks of buildings, balanced by heat path.

``import thermonet as tn`` gives the public contract (:class:`Network`, :func:`simulate`,
:class:`Results`, the switch conditions) and every public submodule: the physics modules
(``tn.weather``, ``tn.solar``, ``tn.constructions``, ``tn.gains``, ``tn.comfort``), the model
(``tn.network``, ``tn.parameters``, ``tn.schedules``, ``tn.controls``), the engine
(``tn.engine``), and what is composed on top (``tn.results``, ``tn.periods``,
``tn.builders``, ``tn.studies``, ``tn.plots``, ``tn.display``, ``tn.io``).
"""

__version__ = "0.1.0"

from thermonet.controls import (  # noqa: E402
    Condition,
    Signal,
    above,
    below,
    colder,
    hours,
    warmer,
    when,
)
from thermonet.engine.simulate import simulate  # noqa: E402
from thermonet.network import Network, radiation_conductance  # noqa: E402
from thermonet.results import Results  # noqa: E402

#: Public submodules, imported on first attribute access (``tn.builders``) so that
#: ``import thermonet`` stays quick; ``import thermonet.builders`` works as usual.
SUBMODULES = ("airflow", "builders", "comfort", "constants", "constructions", "controls",
              "display", "engine", "errors", "gains", "io", "labels", "network", "occupancy",
              "parameters", "periods", "plots", "results", "schedules", "solar", "studies",
              "weather")


def __getattr__(name):
    if name in SUBMODULES:
        import importlib

        return importlib.import_module(f"thermonet.{name}")
    raise AttributeError(f"module 'thermonet' has no attribute {name!r}; public submodules: "
                         f"{', '.join(SUBMODULES)}")


def __dir__():
    return sorted(set(globals()) | set(SUBMODULES))

__all__ = [
    "Condition",
    "Network",
    "Results",
    "Signal",
    "above",
    "airflow",
    "below",
    "builders",
    "colder",
    "comfort",
    "constants",
    "constructions",
    "controls",
    "display",
    "engine",
    "errors",
    "gains",
    "hours",
    "io",
    "labels",
    "network",
    "occupancy",
    "parameters",
    "periods",
    "plots",
    "radiation_conductance",
    "results",
    "schedules",
    "simulate",
    "solar",
    "studies",
    "warmer",
    "weather",
    "when",
]
