"""thermonet: hourly lumped-RC thermal networks of buildings, balanced by heat path."""

from .controls import Condition, Signal, above, below, colder, hours, warmer, when
from .network import Network, radiation_conductance
from .results import Results
from .solvers import simulate

__version__ = "0.1.0"

__all__ = [
    "Condition",
    "Network",
    "Results",
    "Signal",
    "above",
    "below",
    "colder",
    "hours",
    "radiation_conductance",
    "simulate",
    "warmer",
    "when",
]
