"""The one place the build imports feasibly: the kernel rules it reuses.

Everything the build takes from the feasibly package is imported here and nowhere else, so a
move of kernel modules changes this file only. The build reads the kernel of the checkout it runs
from (``__main__`` puts ``<repo>/src`` first on ``sys.path``).

Reused (the output is byte-identical with them, checked by rebuilding):

- ``canonical_hash`` — the library's content hash (the same rule the reader checks);
- ``COVERAGE_DIVISORS`` / ``standard_uncertainty`` — stated uncertainty → standard uncertainty
  (ATcT 95 % limits ÷ 1.96, rectangular half-widths ÷ √3, policy values ÷ 1);
- ``Library`` — the kernel's reader validates the entries before the transition step and the
  finished document before it is written; ``Library.transition_parent`` picks the neighbour a
  phase that does not exist at 298.15 K is carried from;
- ``parse_formula`` — the kernel's formula reader, for the aqueous ions' charged formulas;
- ``T_REF`` (298.15 K), ``STANDARD_PRESSURE_PA`` (1 bar) and ``ONE_ATM_PA``.

Not reused: the kernel's NASA-7 evaluation (``Nasa7``). It uses R = 8.314462618 J/(mol·K) and
Horner's scheme, the build Cantera's R (8.31446261815324) and the power form of the published
equations. Measured on the 1102 NASA entries: the kernel's H(298.15) differs from the build's in
the last bits for 1098 of them and its S(298.15) for all 1102; taking only the transition
enthalpies from the kernel's evaluation changed 399 lines of species-library.json. Byte identity
with the committed files is the acceptance test of this build, so :mod:`.polynomials` keeps the
build's own evaluation.
"""

from __future__ import annotations

from .errors import SourceError

try:
    import feasibly
    from feasibly.conditions import ONE_ATM_PA, STANDARD_PRESSURE_PA
    from feasibly.library import (
        COVERAGE_DIVISORS,
        T_REF,
        Library,
        canonical_hash,
        parse_formula,
        standard_uncertainty,
    )
except ImportError as exc:  # the kernel or one of its run-time dependencies is missing
    raise SourceError(
        f"the feasibly kernel cannot be imported ({exc}); run the build from a checkout "
        "(python data/build_species_library) with feasibly's run-time dependencies installed"
    ) from None

#: Folder of the feasibly package whose rules the build uses (printed in the summary).
KERNEL_ORIGIN = str(feasibly.__path__[0])

__all__ = [
    "COVERAGE_DIVISORS",
    "KERNEL_ORIGIN",
    "ONE_ATM_PA",
    "STANDARD_PRESSURE_PA",
    "T_REF",
    "Library",
    "canonical_hash",
    "parse_formula",
    "standard_uncertainty",
]
