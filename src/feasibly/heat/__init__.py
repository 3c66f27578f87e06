"""Heat: what a step needs or releases, and how hot it could run, with the data's uncertainty.

- :mod:`~feasibly.heat.duty` — heat duty per mole of reaction, per kg of product and per kg of
  feed, feed at its own temperatures, products at the reaction temperature, phase changes
  included, with a 95 % interval from the call's own draws;
- :mod:`~feasibly.heat.adiabatic` — the adiabatic temperature of a step (full, given or
  equilibrium conversion, with inerts and excess reactants), with its interval;
- :mod:`~feasibly.heat.caution` — the strongly exothermic caution quoting that temperature with
  its 95 % interval from the call's draws.

The nominal energy balances live in :mod:`feasibly.thermo.energy` (the exotherm caution uses
them). Layer rule: imports the kernel wings up to :mod:`feasibly.equilibrium`; records, the
command line and widgets import this wing, never the reverse.
"""

from .adiabatic import AdiabaticTemperature, adiabatic_temperature
from .caution import cautions_with_draws, result_cautions
from .duty import HeatDuty, heat_duty, read_conversion_choice

__all__ = [
    "AdiabaticTemperature",
    "HeatDuty",
    "adiabatic_temperature",
    "cautions_with_draws",
    "heat_duty",
    "read_conversion_choice",
    "result_cautions",
]
