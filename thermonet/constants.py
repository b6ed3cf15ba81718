"""Physical constants used across thermonet, each with its unit and origin."""

from __future__ import annotations

#: Stefan–Boltzmann constant [W/(m²·K⁴)] (CODATA 2018: 5.670374419e-8).
STEFAN_BOLTZMANN = 5.670374419e-8

#: Zero of the Celsius scale [K].
ZERO_CELSIUS = 273.15

#: Volumetric heat capacity of air ρ·c_p [J/(m³·K)] used for airflow links.
#: ISO 13789:2017 and ISO 13790:2008 (ventilation heat transfer H_ve = ρ_a c_a q_v with
#: ρ_a c_a = 1200 J/(m³K)) — from memory. Equals 0.333 Wh/(m³K), i.e. 0.333 W per (m³/h) per K.
RHO_CP_AIR = 1200.0

#: Seconds per hour [s/h], for m³/h ↔ m³/s and W·s ↔ Wh conversions.
SECONDS_PER_HOUR = 3600.0

#: Joules per kilowatt-hour [J/kWh].
J_PER_KWH = 3.6e6

#: The caution every command, report and the README carry: results inform decisions about
#: health (overheating) and heating plant.
CAUTION = ("Results are estimates for design guidance, not a substitute for code-compliance "
           "calculations; defer to local codes and licensed professionals.")
