"""Notebook widgets for feasibility screening (ipywidgets 8; plotly ``FigureWidget`` via anywidget).

Each component is a small class whose state is traitlets (``value`` and friends), observable and
composable; each has one private observer, called once at construction and registered with
``observe``, which calls the kernel and redraws in one batch:

- :class:`SpeciesPicker` — type a formula, name or CAS number; live matches; provenance on demand;
- :class:`ReactionBuilder` — equation text with live balance feedback, suggestions, auto-balance,
  or rows of species pickers and coefficients;
- :class:`TemperatureControl` — slider plus exact entry in K, °C or °F, inside the data range;
- :class:`UncertaintyInput` — value ± uncertainty with unit, coverage, distribution and a reason;
- :class:`SpeciesEstimate` — a species no table has, from an estimate, as a user library entry;
- :class:`StructureEstimate` — a gas no table has, estimated from its SMILES (group additivity),
  with its groups, calibrated uncertainties or the reason it is refused;
- :class:`Conditions` — total pressure and partial pressures;
- :class:`FeasibilityPanel` — the figures, the verdict in words and the cautions;
- :class:`ConversionTarget` — a required conversion as criterion: where and how surely it is met;
- :class:`RecordExport` — write the call on screen as a decision record and its HTML report;
- :class:`ResultExport` — every table of the result on screen as CSV, its figure as PNG and SVG;
- :class:`FeasibilityWorksheet` — all of them wired together: ``FeasibilityWorksheet("A -> B")``.

Layer rule: widgets call the kernel (``feasibly.assess``, ``feasibly.uncertainty``,
``Library.search``, ``Reaction.parse``) and :mod:`feasibly.figures`; they hold no thermodynamics,
and the kernel never imports this package. Sampled arrays stay in the kernel: only summaries and
binned counts reach the browser. Bad input shows the kernel's message inline and keeps the last
good result on screen.
"""

from .conditions import Conditions
from .conversion import ConversionTarget
from .export import ResultExport
from .panel import FeasibilityPanel
from .reaction import ReactionBuilder
from .record import RecordExport
from .species import SpeciesPicker
from .structure import StructureEstimate
from .temperature import TemperatureControl
from .uncertainty import SpeciesEstimate, UncertaintyInput
from .worksheet import FeasibilityWorksheet

__all__ = [
    "Conditions",
    "ConversionTarget",
    "FeasibilityPanel",
    "FeasibilityWorksheet",
    "ReactionBuilder",
    "RecordExport",
    "ResultExport",
    "SpeciesEstimate",
    "SpeciesPicker",
    "StructureEstimate",
    "TemperatureControl",
    "UncertaintyInput",
]
