"""The build, step by step (each step is one module; see the package docstring)."""

from __future__ import annotations

from .aqueous import build_aqueous
from .atct import apply_atct, read_atct
from .calibration import calibrate
from .crc import build_crc
from .crc_auto import build_crc_auto
from .crosschecks import drop_unverified_crc, run_crosschecks
from .elements import build_elements
from .errors import need
from .gaps import build_gaps, read_janaf_tsv
from .hazards import build_hazards
from .identifiers import assign_identifiers
from .janaf_tables import janaf_matches, load_janaf_tables
from .nasa import build_nasa
from .one_bar import check_one_bar
from .phase_points import add_phase_points
from .physical_checks import cut_ranges
from .reference_states import set_reference_states
from .transitions import apply_transition_policy
from .write import finish, summary, write_elements, write_outputs

# Fewer transition-chained entries than this means the neighbour rule stopped matching (today
# the NASA condensed phases give well over a hundred).
MIN_CHAINED = 50


def main() -> None:
    """Rebuild the four data files next to the build folder."""
    els = build_elements()
    write_elements(els)  # now: the kernel's formula reader (transitions, write) reads it
    unmapped: list[str] = []
    entries = build_nasa(els, unmapped)
    keys = {(e["formula"], e["phase"], e["form"]) for e in entries}
    crc_entries, crc_skipped = build_crc(els, keys)
    entries += crc_entries
    unmapped += crc_skipped
    atct_g, atct_l = read_atct()
    assign_identifiers(entries, atct_g, atct_l)
    entries += build_crc_auto(els, entries, unmapped)

    ids = [e["id"] for e in entries]
    dup = sorted({i for i in ids if ids.count(i) > 1})
    need(not dup, f"duplicate ids: {dup}")
    # (aqueous ions are added after the calibration, whose constant-Cp factor they use)

    set_reference_states(entries)
    entries = drop_unverified_crc(entries, unmapped)
    unmapped += [f"range cut: {x}" for x in cut_ranges(entries)]
    gaps_atct: dict[str, dict[str, float]] = {}
    apply_atct(entries, atct_g, atct_l, gaps_atct)
    n_chained = apply_transition_policy(entries)
    need(
        n_chained > MIN_CHAINED,
        f"only {n_chained} transition-chained entries: the rule stopped matching",
    )

    janaf = load_janaf_tables()
    one_bar = check_one_bar(entries, janaf)
    jmatch = janaf_matches(entries, janaf)
    gaps = build_gaps(entries, gaps_atct, janaf, jmatch, read_janaf_tsv())

    # The calibration sets every policy-governed uncertainty from the measured spread and widens
    # the disputed values; the cross-checks then test the shipped uncertainties.
    policies_extra, calibration_csv, cal_summary = calibrate(entries, jmatch, gaps_atct)
    print("calibration:", cal_summary)
    checks = run_crosschecks(entries, janaf, jmatch, gaps_atct, cal_summary["classes"])
    aq_entries, aq_policies = build_aqueous(els, entries, cal_summary["classes"]["cp-constant"])
    entries += aq_entries
    policies_extra |= aq_policies
    print("phase points:", add_phase_points(entries))

    species = finish(entries)
    # hazard flags are for pure substances; aqueous ions share CAS numbers with some of them
    hazards_csv, n_hazards = build_hazards([e for e in species if e["phase"] != "aq"])
    write_outputs(
        species,
        hazards_csv,
        one_bar,
        jmatch,
        gaps,
        unmapped,
        (policies_extra, calibration_csv),
        checks=checks,
    )
    summary(species, gaps, n_hazards, jmatch, one_bar, unmapped)
