#!/usr/bin/env python
"""Rebuild feasibly's shipped species data library (schema `feasibly-species`, version 1).

Run from the repository root:   python data/build_species_library.py

Build-time dependencies only (never runtime ones): cantera, chemicals, thermochem, janaf,
pyyaml, numpy.  Every source file is located through its installed package; each package's
version is recorded in the `sources` block.  The script fails loudly (SourceError) when a source
file is missing or has changed shape.  Output is deterministic: same inputs -> identical bytes.

Outputs (next to this script): species-library.json, elements.json, hazard-flags.csv,
source-gaps.json.  See README.md and SCHEMA.md.
"""

from __future__ import annotations

import csv
import hashlib
import importlib.metadata as md
import importlib.resources as ir
import io
import json
import math
import re
import xml.etree.ElementTree as ET  # package data file, parsed without entity expansion of DTDs
from pathlib import Path

import yaml

OUT = Path(__file__).resolve().parent
LIBRARY_VERSION = "2026.12.0"
P_STANDARD = 100000.0  # 1 bar; see README "1 bar finding" (check_one_bar below)
T_REF = 298.15

# Relative tolerance used when the polynomial's own H(298.15) is compared with a stated
# reference-state zero: NASA sets reference elements to 0 by construction; 50 J/mol covers
# fitting round-off (common practice, no source).
REF_ZERO_TOL = 50.0


class SourceError(RuntimeError):
    """A source file is missing or no longer has the shape this script expects."""


def need(cond, msg):
    if not cond:
        raise SourceError(msg)


# --------------------------------------------------------------------------------------------
# Source location
# --------------------------------------------------------------------------------------------


def pkg_file(pkg, *parts):
    p = Path(str(ir.files(pkg).joinpath(*parts)))
    need(p.is_file(), f"source file missing: {pkg}/{'/'.join(parts)}")
    return p


def cantera_file(name):
    import cantera

    for d in cantera.get_data_directories():
        p = Path(d) / name
        if p.is_file():
            return p
    raise SourceError(f"cantera data file {name} not found in {cantera.get_data_directories()}")


def licence_of(dist):
    meta = md.metadata(dist)
    return meta.get("License-Expression") or meta.get("License") or "see package"


import cantera  # noqa: E402  (imported after helper definitions on purpose: build dependency)
from chemicals.elements import periodic_table, simple_formula_parser  # noqa: E402
from chemicals.identifiers import search_chemical  # noqa: E402

# Molar gas constant, J/(mol K): taken from Cantera (CODATA 2018 exact value) so that
# H = R T (H/RT) is evaluated with the same constant the test reference (Cantera) uses.
R = cantera.gas_constant / 1000.0

VERS = {d: md.version(d) for d in ("cantera", "chemicals", "thermochem", "janaf")}

SOURCES = {
    "nasa-glenn": {
        "citation": "B.J. McBride, S. Gordon, M.A. Reno, Coefficients for Calculating Thermodynamic and "
        "Transport Properties of Individual Species, NASA TM-4513 (1993); files nasa_gas.yaml "
        "and nasa_condensed.yaml",
        "carried_by": f"cantera {VERS['cantera']}",
        "licence": f"NASA Glenn data: US-government work; carrier licence {licence_of('cantera')}",
        "note": "NASA-7 polynomials; file labels reference pressure 101325 Pa but gas entropies match "
        "NIST-JANAF 1 bar values (see README); ions in the thermal-electron convention",
    },
    "burcat": {
        "citation": "A. Burcat, B. Ruscic, Third Millennium Ideal Gas and Condensed Phase Thermochemical "
        "Database for Combustion (BURCAT_THR.xml)",
        "carried_by": f"thermochem {VERS['thermochem']}",
        "licence": f"database freely distributed by its authors; carrier licence {licence_of('thermochem')}",
        "note": "NASA-7 polynomials, break at 1000 K (the Burcat format's fixed common temperature)",
    },
    "atct-1.112": {
        "citation": "B. Ruscic et al., Active Thermochemical Tables (ATcT) ver. 1.112, "
        "files 'ATcT 1.112 (g).tsv' and 'ATcT 1.112 (l).tsv'",
        "carried_by": f"chemicals {VERS['chemicals']}",
        "licence": f"carrier licence {licence_of('chemicals')}",
        "note": "uncertainties are 95 % limits (expanded-95); only neutral species are used",
    },
    "crc-298": {
        "citation": "CRC Handbook of Chemistry and Physics, Standard Thermodynamic Properties of Chemical "
        "Substances (file 'CRC Standard Thermodynamic Properties of Chemical Substances.tsv')",
        "carried_by": f"chemicals {VERS['chemicals']}",
        "licence": f"carrier licence {licence_of('chemicals')}",
        "note": "298.15 K values only (Hf, Gf, S0, Cp per phase)",
    },
    "janaf-4": {
        "citation": "M.W. Chase, NIST-JANAF Thermochemical Tables, 4th ed., J. Phys. Chem. Ref. Data "
        "Monograph 9 (1998)",
        "carried_by": f"janaf {VERS['janaf']} (tables) and chemicals {VERS['chemicals']} (JANAF_1998.tsv)",
        "licence": f"NIST data; carriers {licence_of('janaf')} / {licence_of('chemicals')}",
        "note": "used for comparison (source-gaps.json) and the 1 bar check only",
    },
    "chemicals-identifiers": {
        "citation": "chemicals package identifier databases (PubChem-derived) via "
        "chemicals.identifiers.search_chemical",
        "carried_by": f"chemicals {VERS['chemicals']}",
        "licence": f"carrier licence {licence_of('chemicals')}",
        "note": "CAS numbers and names; composition checked against the entry",
    },
}


# --------------------------------------------------------------------------------------------
# Uncertainty policies (written defaults; every one marked assumed: true where used)
# --------------------------------------------------------------------------------------------
# All numbers below are judgement values: "common practice, no source" unless stated.
POLICY = {
    "nasa-gas-dHf": (
        "Gas-phase dHf(298.15) from a NASA/Burcat polynomial with no stated uncertainty: "
        "standard u = 2000 J/mol for neutral species. Reason: JANAF-quality small-molecule "
        "values typically carry 0.1-4 kJ/mol; 2 kJ/mol is a middle value. Common practice, no "
        "source.",
        2000.0,
    ),
    "nasa-ion-dHf": (
        "Gas-ion dHf(298.15) from a NASA polynomial (thermal-electron convention): standard "
        "u = 8000 J/mol. Reason: ion values combine a neutral dHf with an ionisation energy or "
        "electron affinity and are less well determined. Common practice, no source.",
        8000.0,
    ),
    "condensed-dHf": (
        "Condensed-phase dHf(298.15) from a NASA/Burcat polynomial: standard u = 4000 J/mol. "
        "Reason: calorimetric values for common solids/liquids typically carry 1-8 kJ/mol. "
        "Common practice, no source.",
        4000.0,
    ),
    "hypothetical-dHf": (
        "dHf(298.15) of an entry whose validity range excludes 298.15 K (an extrapolated "
        "bookkeeping constant, e.g. a liquid above its melting point): standard "
        "u = 10000 J/mol. Reason: adds the extrapolation error of the fit. Common practice, "
        "no source.",
        10000.0,
    ),
    "transition-dHf": (
        "Entry whose range excludes 298.15 K and begins (or ends) where a condensed phase of the "
        "same formula ends (or begins), e.g. gamma-Fe after alpha-Fe, a liquid after its solid: "
        "the kernel carries such a phase's enthalpy from that neighbour at the transition "
        "temperature T_tr, so dHf_298.u is the standard uncertainty of the transition enthalpy "
        "there: u = 0.05*|dH_tr| + 200 J/mol (calorimetric transition enthalpies carry a few "
        "per cent; common practice, no source).",
        None,
    ),
    "transition-S": (
        "S of a phase carried from its neighbour at a transition moves with the transition "
        "enthalpy (dS_tr = dH_tr/T_tr), so it has no uncertainty of its own: u = 0.",
        0.0,
    ),
    "crc-dHf": (
        "dHf(298.15) from the CRC table (no stated uncertainty): standard u = 4000 J/mol. Common "
        "practice, no source.",
        4000.0,
    ),
    "gas-S": (
        "Gas S(298.15) from a polynomial fitted to statistical-mechanics tables: standard "
        "u = 0.1 J/(mol K). Reason: spectroscopic entropies of common gases carry 0.004-0.05 "
        "J/(mol K) (from memory: CODATA Key Values for Thermodynamics, Cox, Wagman & Medvedev "
        "1989), and the polynomial fits add a few hundredths; 0.1 covers both. Common practice.",
        0.1,
    ),
    "condensed-S": (
        "Condensed S(298.15) from a polynomial fitted to calorimetric (third-law) data: standard "
        "u = 0.3 J/(mol K) + 0.5 % of S. Reason: CODATA key values for common solids carry "
        "0.03-0.4 J/(mol K) (from memory: Cox, Wagman & Medvedev 1989); less-studied solids more, "
        "roughly in proportion to S. Common practice, no source.",
        None,
    ),
    "hypothetical-S": (
        "S(298.15) of an entry whose range excludes 298.15 K: standard u = 8 J/(mol K). "
        "Common practice, no source.",
        8.0,
    ),
    "crc-S": (
        "S(298.15) from the CRC table: standard u = 2 J/(mol K). Common practice, no source.",
        2.0,
    ),
    "cp-gas-poly": (
        "Cp factor for gas NASA-7 polynomials: u_rel = 0.02 (fits reproduce the tables to "
        "better than 1 %; doubled for the tables' own error). Common practice, no source.",
        0.02,
    ),
    "cp-condensed-poly": (
        "Cp factor for condensed NASA-7 polynomials: u_rel = 0.05 (calorimetric Cp and "
        "its high-T extrapolation). Common practice, no source.",
        0.05,
    ),
    "cp-crc-constant": (
        "Cp factor for a constant Cp(298.15) taken from the CRC table: u_rel = 0.25, and "
        "T_range_K limited to [250, 500] K (upper end lowered to the melting point when the "
        "chemicals package knows it). Reason: for inorganic solids Cp typically rises 10-25 % "
        "between 298 and 500 K; because the factor multiplies the increments h(T), s(T), the "
        "absolute uncertainty grows with |T - 298.15 K|. Common practice, no source.",
        0.25,
    ),
    "atct-95": (
        "ATcT uncertainties are stated as 95 % limits; standard u = stated / 1.96 (normal "
        "coverage factor for 95 %). Not a default: the stated value is used.",
        1.96,
    ),
}


def vblock(value, u, source, entry, stated, convention, divisor, usource, assumed):
    return {
        "value": float(value),
        "u": float(u),
        "source": source,
        "entry": entry,
        "uncertainty": {
            "stated": float(stated),
            "convention": convention,
            "divisor": float(divisor),
            "source": usource,
            "assumed": bool(assumed),
        },
    }


def policy_block(value, pid, source, entry, u=None):
    """A value block whose uncertainty a written policy sets (u given for value-dependent ones)."""
    u = POLICY[pid][1] if u is None else float(u)
    return vblock(value, u, source, entry, u, "standard", 1.0, f"policy:{pid}", True)


# --------------------------------------------------------------------------------------------
# NASA-7 helpers
# --------------------------------------------------------------------------------------------


def _interval(breaks, T):
    """Interval index used for T: the one containing it; the first when T is below the range, the
    last when above (SCHEMA.md: 298.15 K is taken in the first interval when it lies below)."""
    n = len(breaks) - 1
    for i in range(n):
        if breaks[i] <= T <= breaks[i + 1]:
            return i
    return 0 if T < breaks[0] else n - 1


def h_RT(c, T):
    return c[0] + c[1] * T / 2 + c[2] * T**2 / 3 + c[3] * T**3 / 4 + c[4] * T**4 / 5 + c[5] / T


def s_R(c, T):
    return (
        c[0] * math.log(T) + c[1] * T + c[2] * T**2 / 2 + c[3] * T**3 / 3 + c[4] * T**4 / 4 + c[6]
    )


def cp_R(c, T):
    return c[0] + c[1] * T + c[2] * T**2 + c[3] * T**3 + c[4] * T**4


def poly_298(breaks, coeffs):
    c = coeffs[_interval(breaks, T_REF)]
    return R * T_REF * h_RT(c, T_REF), R * s_R(c, T_REF)


# --------------------------------------------------------------------------------------------
# Elements
# --------------------------------------------------------------------------------------------


def build_elements():
    els = {}
    for e in periodic_table:
        need(e.MW and e.MW > 0, f"element {e.symbol} without atomic weight")
        els[e.symbol] = {"name": e.name, "atomic_weight": float(e.MW)}
    need(len(els) >= 100 and "Fe" in els and "C" in els, "chemicals periodic table changed shape")
    return els


def molar_mass(elements, els):
    need(elements, "a species without elements")
    return round(sum(els[s]["atomic_weight"] * n for s, n in elements.items()), 6)


def hill(elements):
    keys = sorted(elements)
    if "C" in elements:
        keys = (
            ["C"]
            + (["H"] if "H" in elements else [])
            + sorted(k for k in elements if k not in "CH" or len(k) > 1)
        )
        keys = [k for i, k in enumerate(keys) if k not in keys[:i]]
    out = ""
    for k in keys:
        n = elements[k]
        out += k + ("" if n == 1 else (str(int(n)) if float(n).is_integer() else str(n)))
    return out


# --------------------------------------------------------------------------------------------
# Curated naming tables (ours).  Names are common chemical names; CAS numbers are NOT typed in
# here: they are resolved at build time (ATcT table by name, then chemicals.identifiers by name)
# and checked against the entry's composition.
# --------------------------------------------------------------------------------------------

# NASA gas name -> (library formula, [names]).  Formula rule (README): the most common isomer keeps
# the plain molecular/condensed formula; others get c- (cyclic), i-, s-, t-, neo-, cis-/trans-,
# position prefixes, or a condensed structural formula.
NASA_GAS = {
    "CH4": ("CH4", ["methane"]),
    "CH3OH": ("CH3OH", ["methanol", "methyl alcohol"]),
    "CO": ("CO", ["carbon monoxide"]),
    "CO2": ("CO2", ["carbon dioxide"]),
    "H2O": ("H2O", ["water"]),
    "H2": ("H2", ["hydrogen"]),
    "O2": ("O2", ["oxygen"]),
    "N2": ("N2", ["nitrogen"]),
    "Ar": ("Ar", ["argon"]),
    "He": ("He", ["helium"]),
    "Ne": ("Ne", ["neon"]),
    "Kr": ("Kr", ["krypton"]),
    "Xe": ("Xe", ["xenon"]),
    "F2": ("F2", ["fluorine"]),
    "CL2": ("Cl2", ["chlorine"]),
    "Br2": ("Br2", ["bromine"]),
    "I2": ("I2", ["iodine"]),
    "O3": ("O3", ["ozone"]),
    "H2O2": ("H2O2", ["hydrogen peroxide"]),
    "NH3": ("NH3", ["ammonia"]),
    "N2H4": ("N2H4", ["hydrazine"]),
    "NO": ("NO", ["nitric oxide", "nitrogen monoxide"]),
    "NO2": ("NO2", ["nitrogen dioxide"]),
    "N2O": ("N2O", ["nitrous oxide"]),
    "N2O4": ("N2O4", ["dinitrogen tetroxide"]),
    "N2O5": ("N2O5", ["dinitrogen pentoxide"]),
    "N2O3": ("N2O3", ["dinitrogen trioxide"]),
    "HNO3": ("HNO3", ["nitric acid"]),
    "HNO2": ("HNO2", ["nitrous acid"]),
    "HCN": ("HCN", ["hydrogen cyanide"]),
    "HNC": ("HNC", ["hydrogen isocyanide"]),
    "HNCO": ("HNCO", ["isocyanic acid"]),
    "SO2": ("SO2", ["sulfur dioxide"]),
    "SO3": ("SO3", ["sulfur trioxide"]),
    "H2S": ("H2S", ["hydrogen sulfide"]),
    "COS": ("COS", ["carbonyl sulfide"]),
    "CS2": ("CS2", ["carbon disulfide"]),
    "H2SO4": ("H2SO4", ["sulfuric acid"]),
    "SF6": ("SF6", ["sulfur hexafluoride"]),
    "S8": ("S8", ["octasulfur"]),
    "HF": ("HF", ["hydrogen fluoride"]),
    "HCL": ("HCl", ["hydrogen chloride"]),
    "HBr": ("HBr", ["hydrogen bromide"]),
    "HI": ("HI", ["hydrogen iodide"]),
    "HOCL": ("HOCl", ["hypochlorous acid"]),
    "CLO2": ("ClO2", ["chlorine dioxide"]),
    "CLF3": ("ClF3", ["chlorine trifluoride"]),
    "COCL2": ("COCl2", ["phosgene"]),
    "COF2": ("COF2", ["carbonyl fluoride"]),
    "CCL4": ("CCl4", ["carbon tetrachloride", "tetrachloromethane"]),
    "CHCL3": ("CHCl3", ["chloroform", "trichloromethane"]),
    "CH2CL2": ("CH2Cl2", ["dichloromethane", "methylene chloride"]),
    "CH3CL": ("CH3Cl", ["chloromethane", "methyl chloride"]),
    "CH3F": ("CH3F", ["fluoromethane", "methyl fluoride"]),
    "CH2F2": ("CH2F2", ["difluoromethane"]),
    "CHF3": ("CHF3", ["fluoroform", "trifluoromethane"]),
    "CF4": ("CF4", ["tetrafluoromethane"]),
    "CCL2F2": ("CCl2F2", ["dichlorodifluoromethane"]),
    "CCL3F": ("CCl3F", ["trichlorofluoromethane"]),
    "CHCLF2": ("CHClF2", ["chlorodifluoromethane"]),
    "CCLF3": ("CClF3", ["chlorotrifluoromethane"]),
    "C2CL4": ("C2Cl4", ["tetrachloroethylene"]),
    "C2F4": ("C2F4", ["tetrafluoroethylene"]),
    "NF3": ("NF3", ["nitrogen trifluoride"]),
    "PH3": ("PH3", ["phosphine"]),
    "PCL3": ("PCl3", ["phosphorus trichloride"]),
    "SiH4": ("SiH4", ["silane"]),
    "SiCL4": ("SiCl4", ["silicon tetrachloride"]),
    "SiF4": ("SiF4", ["silicon tetrafluoride"]),
    "SiHCL3": ("SiHCl3", ["trichlorosilane"]),
    "SiC4H12": ("Si(CH3)4", ["tetramethylsilane"]),
    "TiCL4": ("TiCl4", ["titanium tetrachloride"]),
    "FeC5O5": ("Fe(CO)5", ["iron pentacarbonyl"]),
    "OH": ("OH", ["hydroxyl"]),
    "HO2": ("HO2", ["hydroperoxyl"]),
    "H": ("H", ["hydrogen atom"]),
    "O": ("O", ["oxygen atom"]),
    "N": ("N", ["nitrogen atom"]),
    "C": ("C", ["carbon atom"]),
    "CH3": ("CH3", ["methyl"]),
    "CH2": ("CH2", ["methylene"]),
    "CH": ("CH", ["methylidyne"]),
    "HCO": ("HCO", ["formyl"]),
    "CH2OH": ("CH2OH", ["hydroxymethyl"]),
    "CH3O": ("CH3O", ["methoxy"]),
    "HCHO,formaldehy": ("HCHO", ["formaldehyde", "methanal"]),
    "HCOOH": ("HCOOH", ["formic acid"]),
    "(HCOOH)2": ("(HCOOH)2", ["formic acid dimer"]),
    "COOH": ("COOH", ["carboxyl"]),
    "CHCO,ketyl": ("HCCO", ["ketenyl"]),
    "C2H2,acetylene": ("C2H2", ["acetylene", "ethyne"]),
    "C2H2,vinylidene": ("H2CC", ["vinylidene"]),
    "CH2CO,ketene": ("CH2CO", ["ketene"]),
    "C2H3,vinyl": ("C2H3", ["vinyl"]),
    "CH3CN": ("CH3CN", ["acetonitrile"]),
    "CH3CO,acetyl": ("CH3CO", ["acetyl"]),
    "C2H4": ("C2H4", ["ethylene", "ethene"]),
    "C2H4O,ethylen": ("c-C2H4O", ["ethylene oxide", "oxirane"]),
    "CH3CHO,ethanal": ("CH3CHO", ["acetaldehyde", "ethanal"]),
    "CH3COOH": ("CH3COOH", ["acetic acid"]),
    "(CH3COOH)2": ("(CH3COOH)2", ["acetic acid dimer"]),
    "C2H5": ("C2H5", ["ethyl"]),
    "C2H6": ("C2H6", ["ethane"]),
    "CH3N2CH3": ("CH3NNCH3", ["azomethane"]),
    "CH3OCH3": ("CH3OCH3", ["dimethyl ether"]),
    "C2H5OH": ("C2H5OH", ["ethanol", "ethyl alcohol"]),
    "C2N2": ("C2N2", ["cyanogen"]),
    "CLCN": ("ClCN", ["cyanogen chloride"]),
    "C3H3,propargyl": ("C3H3", ["propargyl"]),
    "C3H4,allene": ("CH2CCH2", ["allene", "propadiene"]),
    "C3H4,propyne": ("CH3CCH", ["propyne", "methylacetylene"]),
    "C3H4,cyclo-": ("c-C3H4", ["cyclopropene"]),
    "C3H5,allyl": ("C3H5", ["allyl"]),
    "C3H6,propylene": ("C3H6", ["propene", "propylene"]),
    "C3H6,cyclo-": ("c-C3H6", ["cyclopropane"]),
    "C3H7,n-propyl": ("C3H7", ["n-propyl"]),
    "C3H7,i-propyl": ("i-C3H7", ["isopropyl"]),
    "C3H8": ("C3H8", ["propane"]),
    "C3H8O,1propanol": ("C3H7OH", ["1-propanol", "n-propanol"]),
    "C3H8O,2propanol": ("i-C3H7OH", ["2-propanol", "isopropanol"]),
    "C3O2": ("C3O2", ["carbon suboxide"]),
    "C4H2": ("C4H2", ["butadiyne", "diacetylene"]),
    "C4H4,1,3-cyclo-": ("c-C4H4", ["cyclobutadiene"]),
    "C4H6,butadiene": ("C4H6", ["1,3-butadiene"]),
    "C4H6,2-butyne": ("CH3CCCH3", ["2-butyne"]),
    "C4H6,cyclo-": ("c-C4H6", ["cyclobutene"]),
    "C4H8,1-butene": ("C4H8", ["1-butene"]),
    "C4H8,cis2-buten": ("cis-2-C4H8", ["cis-2-butene"]),
    "C4H8,tr2-butene": ("trans-2-C4H8", ["trans-2-butene"]),
    "C4H8,isobutene": ("i-C4H8", ["isobutene", "isobutylene", "2-methylpropene"]),
    "C4H8,cyclo-": ("c-C4H8", ["cyclobutane"]),
    "C4H9,n-butyl": ("C4H9", ["n-butyl"]),
    "C4H9,i-butyl": ("i-C4H9", ["isobutyl"]),
    "C4H9,s-butyl": ("s-C4H9", ["sec-butyl"]),
    "C4H9,t-butyl": ("t-C4H9", ["tert-butyl"]),
    "C4H10,isobutane": ("i-C4H10", ["isobutane", "2-methylpropane"]),
    "C4H10,n-butane": ("C4H10", ["n-butane", "butane"]),
    "C5H6,1,3cyclo-": ("c-C5H6", ["cyclopentadiene"]),
    "C5H8,cyclo-": ("c-C5H8", ["cyclopentene"]),
    "C5H10,1-pentene": ("C5H10", ["1-pentene"]),
    "C5H10,cyclo-": ("c-C5H10", ["cyclopentane"]),
    "C5H11,pentyl": ("C5H11", ["n-pentyl"]),
    "C5H11,t-pentyl": ("t-C5H11", ["tert-pentyl"]),
    "C5H12,n-pentane": ("C5H12", ["n-pentane", "pentane"]),
    "C5H12,i-pentane": ("i-C5H12", ["isopentane", "2-methylbutane"]),
    "CH3C(CH3)2CH3": ("neo-C5H12", ["neopentane", "2,2-dimethylpropane"]),
    "C6H5,phenyl": ("C6H5", ["phenyl"]),
    "C6H5O,phenoxy": ("C6H5O", ["phenoxy"]),
    "C6H6": ("C6H6", ["benzene"]),
    "C6H5OH,phenol": ("C6H5OH", ["phenol"]),
    "C6H10,cyclo-": ("c-C6H10", ["cyclohexene"]),
    "C6H12,1-hexene": ("C6H12", ["1-hexene"]),
    "C6H12,cyclo-": ("c-C6H12", ["cyclohexane"]),
    "C6H13,n-hexyl": ("C6H13", ["n-hexyl"]),
    "C7H7,benzyl": ("C6H5CH2", ["benzyl"]),
    "C7H8": ("C6H5CH3", ["toluene", "methylbenzene"]),
    "C7H8O,cresol": ("CH3C6H4OH", ["cresol"]),
    "C7H14,1-heptene": ("C7H14", ["1-heptene"]),
    "C7H15,n-heptyl": ("C7H15", ["n-heptyl"]),
    "C7H16,n-heptane": ("C7H16", ["n-heptane", "heptane"]),
    "C8H8,styrene": ("C6H5CHCH2", ["styrene"]),
    "C8H10,ethylbenz": ("C6H5C2H5", ["ethylbenzene"]),
    "C8H16,1-octene": ("C8H16", ["1-octene"]),
    "C8H17,n-octyl": ("C8H17", ["n-octyl"]),
    "C8H18,isooctane": ("i-C8H18", ["isooctane", "2,2,4-trimethylpentane"]),
    "C8H18,n-octane": ("C8H18", ["n-octane", "octane"]),
    "C9H19,n-nonyl": ("C9H19", ["n-nonyl"]),
    "C10H8,naphthale": ("C10H8", ["naphthalene"]),
    "C10H21,n-decyl": ("C10H21", ["n-decyl"]),
    "C12H9,o-bipheny": ("C12H9", ["o-biphenylyl"]),
    "C12H10,bipheny": ("C12H10", ["biphenyl"]),
    "C3H6O": ("C2H5CHO", None),  # resolved in nasa_gas_special(): NASA note decides the isomer
    "FS2F,fluorodisu": ("FSSF", ["difluorodisulfane"]),
    "S2F2,thiothiony": ("SSF2", ["thiothionyl fluoride"]),
    "N3H": ("HN3", ["hydrazoic acid"]),
    "CaO2H2": ("Ca(OH)2", ["calcium hydroxide"]),
    "MgO2H2": ("Mg(OH)2", ["magnesium hydroxide"]),
    "BaO2H2": ("Ba(OH)2", []),
    "SrO2H2": ("Sr(OH)2", []),
    "BeO2H2": ("Be(OH)2", []),
    "K2O2H2": ("(KOH)2", []),
    "Na2O2H2": ("(NaOH)2", []),
    "Li2O2H2": ("(LiOH)2", []),
    "Cs2O2H2": ("(CsOH)2", []),
    "H3B3O6": ("(HBO2)3", []),
    "HALO": ("HAlO", []),
    "K2C2N2": ("(KCN)2", []),
    "Na2C2N2": ("(NaCN)2", []),
    "NaOH": ("NaOH", ["sodium hydroxide"]),
    "KOH": ("KOH", ["potassium hydroxide"]),
    "NaCL": ("NaCl", ["sodium chloride"]),
    "KCL": ("KCl", ["potassium chloride"]),
    "Hg": ("Hg", ["mercury"]),
    "Na": ("Na", ["sodium"]),
    "K": ("K", ["potassium"]),
    "Fe": ("Fe", ["iron"]),
    "NH2OH": ("NH2OH", ["hydroxylamine"]),
    "NOCL": ("NOCl", ["nitrosyl chloride"]),
}

# NASA condensed base name (before the phase label) -> library formula, [names] (formula only where the
# mechanical CL->Cl, AL->Al rewrite is not what a chemist writes)
NASA_COND = {
    "C": ("C", ["graphite"]),
    "C6H6": ("C6H6", ["benzene"]),
    "C7H8": ("C6H5CH3", ["toluene"]),
    "C8H18": ("C8H18", ["n-octane", "octane"]),
    "H2O": ("H2O", ["water"]),
    "H2SO4": ("H2SO4", ["sulfuric acid"]),
    "CaO2H2": ("Ca(OH)2", ["calcium hydroxide", "slaked lime"]),
    "MgO2H2": ("Mg(OH)2", ["magnesium hydroxide"]),
    "BaO2H2": ("Ba(OH)2", ["barium hydroxide"]),
    "SrO2H2": ("Sr(OH)2", ["strontium hydroxide"]),
    "BeO2H2": ("Be(OH)2", ["beryllium hydroxide"]),
    "CuO2H2": ("Cu(OH)2", ["copper(II) hydroxide"]),
    "Fe(OH)2": ("Fe(OH)2", ["iron(II) hydroxide"]),
    "Fe(OH)3": ("Fe(OH)3", ["iron(III) hydroxide"]),
    "Cu2O5S": ("Cu2OSO4", ["dolerophanite"]),
    "Fe2S3O12": ("Fe2(SO4)3", ["iron(III) sulfate"]),
    "FeC5O5": ("Fe(CO)5", ["iron pentacarbonyl"]),
    "B3O3H3": ("(HBO)3", []),
    "AL6Si2O13": ("Al6Si2O13", ["mullite"]),
    "AL2SiO5": ("Al2SiO5", ["andalusite"]),
    "Na3ALF6": ("Na3AlF6", ["cryolite"]),
    "Na5AL3F14": ("Na5Al3F14", ["chiolite"]),
    "CaCO3": ("CaCO3", ["calcium carbonate", "calcite"]),
    "SiO2": ("SiO2", ["silicon dioxide", "silica", "quartz"]),
    "TiO2": ("TiO2", ["titanium dioxide", "rutile"]),
    "AL2O3": ("Al2O3", ["aluminium oxide", "alumina", "corundum"]),
    "Fe2O3": ("Fe2O3", ["iron(III) oxide", "hematite"]),
    "Fe3O4": ("Fe3O4", ["iron(II,III) oxide", "magnetite"]),
    "FeO": ("FeO", ["iron(II) oxide", "wustite"]),
    "CaO": ("CaO", ["calcium oxide", "quicklime"]),
    "MgO": ("MgO", ["magnesium oxide", "periclase"]),
    "NaCL": ("NaCl", ["sodium chloride", "halite"]),
    "KCL": ("KCl", ["potassium chloride", "sylvite"]),
    "NaOH": ("NaOH", ["sodium hydroxide"]),
    "KOH": ("KOH", ["potassium hydroxide"]),
    "Na2CO3": ("Na2CO3", ["sodium carbonate"]),
    "K2CO3": ("K2CO3", ["potassium carbonate"]),
    "MgCO3": ("MgCO3", ["magnesium carbonate", "magnesite"]),
    "CaSO4": ("CaSO4", ["calcium sulfate", "anhydrite"]),
    "Na2SO4": ("Na2SO4", ["sodium sulfate"]),
    "K2SO4": ("K2SO4", ["potassium sulfate"]),
    "MgSO4": ("MgSO4", ["magnesium sulfate"]),
    "CuSO4": ("CuSO4", ["copper(II) sulfate"]),
    "FeSO4": ("FeSO4", ["iron(II) sulfate"]),
    "ZnSO4": ("ZnSO4", ["zinc sulfate"]),
    "CaCL2": ("CaCl2", ["calcium chloride"]),
    "MgCL2": ("MgCl2", ["magnesium chloride"]),
    "FeCL2": ("FeCl2", ["iron(II) chloride"]),
    "FeCL3": ("FeCl3", ["iron(III) chloride"]),
    "ALCL3": ("AlCl3", ["aluminium chloride"]),
    "CuO": ("CuO", ["copper(II) oxide"]),
    "Cu2O": ("Cu2O", ["copper(I) oxide"]),
    "FeS": ("FeS", ["iron(II) sulfide"]),
    "FeS2": ("FeS2", ["pyrite"]),
    "NH4CL": ("NH4Cl", ["ammonium chloride"]),
    "CaF2": ("CaF2", ["calcium fluoride", "fluorite"]),
    "Si3N4": ("Si3N4", ["silicon nitride"]),
    "SiC": ("SiC", ["silicon carbide"]),
    "TiCL4": ("TiCl4", ["titanium tetrachloride"]),
    "P4O10": ("P4O10", ["phosphorus pentoxide"]),
    "Hg": ("Hg", ["mercury"]),
    "Br2": ("Br2", ["bromine"]),
    "I2": ("I2", ["iodine"]),
    "S": ("S", ["sulfur"]),
    "P": ("P", ["phosphorus"]),
    "Fe": ("Fe", ["iron"]),
    "Cu": ("Cu", ["copper"]),
    "Zn": ("Zn", ["zinc"]),
    "AL": ("Al", ["aluminium", "aluminum"]),
    "Mg": ("Mg", ["magnesium"]),
    "Ca": ("Ca", ["calcium"]),
    "Na": ("Na", ["sodium"]),
    "K": ("K", ["potassium"]),
    "Si": ("Si", ["silicon"]),
    "Ti": ("Ti", ["titanium"]),
    "Ni": ("Ni", ["nickel"]),
    "Cr": ("Cr", ["chromium"]),
    "Pb": ("Pb", ["lead"]),
    "Li": ("Li", ["lithium"]),
    "Mo": ("Mo", ["molybdenum"]),
    "V": ("V", ["vanadium"]),
    "Zr": ("Zr", ["zirconium"]),
    "Nb": ("Nb", ["niobium"]),
    "Ta": ("Ta", ["tantalum"]),
    "Ba": ("Ba", ["barium"]),
    "Be": ("Be", ["beryllium"]),
    "B": ("B", ["boron"]),
    "Cs": ("Cs", ["caesium", "cesium"]),
    "Sr": ("Sr", ["strontium"]),
    "KO2": ("KO2", ["potassium superoxide"]),
    "NaO2": ("NaO2", ["sodium superoxide"]),
    "Na2O2": ("Na2O2", ["sodium peroxide"]),
    "K2O2": ("K2O2", ["potassium peroxide"]),
}

# NASA condensed phase label -> (phase, form).  Labels per McBride et al. (1993) naming.
LABELS = {
    "cr": ("cr", None),
    "s": ("cr", None),
    "L": ("l", None),
    "a": ("cr", "alpha"),
    "b": ("cr", "beta"),
    "c": ("cr", "gamma"),
    "d": ("cr", "delta"),
    "b,c": ("cr", "beta-gamma"),
    "I": ("cr", "I"),
    "II": ("cr", "II"),
    "III": ("cr", "III"),
    "IV": ("cr", "IV"),
    "V": ("cr", "V"),
    "1": ("cr", "I"),
    "2": ("cr", "II"),
    "3": ("cr", "III"),
    "gr": ("cr", "graphite"),
    "caL": ("cr", "calcite"),
    "an": ("cr", "andalusite"),
    "Lqz": ("cr", "alpha-quartz"),
    "hqz": ("cr", "beta-quartz"),
    "ru": ("cr", "rutile"),
    "rd": ("cr", "red"),
    "yw": ("cr", "yellow"),
    "cr1": ("cr", "orthorhombic"),
    "cr2": ("cr", "monoclinic"),
}
# Species-specific label meanings (McBride et al. 1993 / JANAF naming): Fe(a) alpha (bcc, incl. the
# magnetic transition), Fe(c) gamma (fcc), Fe(d) delta; the generic rule a/b/c/d -> alpha..delta covers them.

SKIP_NASA = {
    "Jet-A(g)": "fuel surrogate mixture, not a species",
    "Jet-A(L)": "fuel surrogate mixture, not a species",
    # Free electrons are outside what an equation in feasibly can name (no element symbol).
    "Electron": "free electron: not a species an equation in feasibly can name",
}
# Cantera 3.2.0's nasa_gas.yaml omits {E: -1} from the composition of Zn+ (its neighbours Zn- and
# every other cation carry it); the NASA name and the polynomial (ΔfH ≈ 1037 kJ/mol, i.e. Zn plus
# its first ionisation energy) say it is the cation. Name -> charge used instead of the composition.
NASA_CHARGE_FIX = {"Zn+": 1}

# Burcat entries added because NASA lacks the species/phase: (Burcat formula string, phase letter) ->
# (formula, phase, form, names)
BURCAT_PICK = {
    ("CH3OH(L)", "C"): ("CH3OH", "l", None, ["methanol", "methyl alcohol"]),
    ("C2H5OH(L)", "C"): ("C2H5OH", "l", None, ["ethanol", "ethyl alcohol"]),
    ("C6H14(L) n-hexa", "C"): ("C6H14", "l", None, ["n-hexane", "hexane"]),
    ("C7H16(L) n-hept", "C"): ("C7H16", "l", None, ["n-heptane", "heptane"]),
    ("C8H18(L) isooct", "C"): ("i-C8H18", "l", None, ["isooctane", "2,2,4-trimethylpentane"]),
    ("C9H20(L)", "L"): ("C9H20", "l", None, ["n-nonane", "nonane"]),
    ("C10H22(L)", "L"): ("C10H22", "l", None, ["n-decane", "decane"]),
    ("C6H5NH2(L) anilin", "C"): ("C6H5NH2", "l", None, ["aniline"]),
    ("C5H12O tC4H9OCH3", "L"): ("t-C4H9OCH3", "l", None, ["methyl tert-butyl ether", "MTBE"]),
    ("N2H4(L) Hydrazin", "L"): ("N2H4", "l", None, ["hydrazine"]),
    ("H2O2(L)", "L"): ("H2O2", "l", None, ["hydrogen peroxide"]),
    ("C6H14,n-hexane", "G"): ("C6H14", "g", None, ["n-hexane", "hexane"]),
    ("C3H6O Acetone", "G"): ("CH3COCH3", "g", None, ["acetone", "propanone"]),
    ("C4H10O-N", "G"): ("C4H9OH", "g", None, ["1-butanol", "n-butanol"]),
    ("C4H10O-S", "G"): ("s-C4H9OH", "g", None, ["2-butanol", "sec-butanol"]),
    ("C4H8O", "G"): ("CH3COC2H5", "g", None, ["2-butanone", "methyl ethyl ketone"]),
    ("C2H5CHO", "G"): ("C2H5CHO", "g", None, ["propanal", "propionaldehyde"]),
    ("C8H10", "G"): ("p-C6H4(CH3)2", "g", None, ["p-xylene", "1,4-dimethylbenzene"]),
    ("C4H8O T.H.FURAN", "G"): ("c-C4H8O", "g", None, ["tetrahydrofuran", "THF"]),
    ("C3H4O CH2=CH-CHO", "G"): ("CH2CHCHO", "g", None, ["acrolein", "propenal"]),
    ("C3H4O2  CH2=CH-C", "G"): ("CH2CHCOOH", "g", None, ["acrylic acid"]),
    ("C3H6O Me-Oxyrane", "G"): ("c-C3H6O", "g", None, ["propylene oxide", "methyloxirane"]),
    ("C6H14 3MP", "G"): ("CH3CH2CH(CH3)CH2CH3", "g", None, ["3-methylpentane"]),
    ("H14C6", "G"): ("(CH3)2CHCH2CH2CH3", "g", None, ["2-methylpentane"]),
    ("C6H14 2,2-DMB", "G"): ("neo-C6H14", "g", None, ["2,2-dimethylbutane", "neohexane"]),
    ("C6H14 2,3-DMB", "G"): ("(CH3)2CHCH(CH3)2", "g", None, ["2,3-dimethylbutane"]),
    ("C4H6 1 butyne", "G"): ("HCCC2H5", "g", None, ["1-butyne"]),
    ("CH5N", "G"): ("CH3NH2", "g", None, ["methylamine"]),
    ("CH3-NH-CH3", "G"): ("(CH3)2NH", "g", None, ["dimethylamine"]),
    ("CH3NO2", "G"): ("CH3NO2", "g", None, ["nitromethane"]),
    ("C2H6S (CH3SCH3)", "G"): ("CH3SCH3", "g", None, ["dimethyl sulfide"]),
    ("CH4S", "G"): ("CH3SH", "g", None, ["methanethiol", "methyl mercaptan"]),
    ("C2H6S", "G"): ("C2H5SH", "g", None, ["ethanethiol", "ethyl mercaptan"]),
    ("C2H5CL", "G"): ("C2H5Cl", "g", None, ["chloroethane", "ethyl chloride"]),
    ("C2H3CL", "G"): ("C2H3Cl", "g", None, ["vinyl chloride", "chloroethene"]),
    ("1,2-DiChloroethan", "G"): ("ClCH2CH2Cl", "g", None, ["1,2-dichloroethane"]),
    ("C6H5CL", "G"): ("C6H5Cl", "g", None, ["chlorobenzene"]),
    ("OCHNH2", "G"): ("HCONH2", "g", None, ["formamide"]),
    ("C4H8O2 DIOXANE", "G"): ("c-C4H8O2", "g", None, ["1,4-dioxane"]),
    ("C5H5N PYRIDINE", "G"): ("C5H5N", "g", None, ["pyridine"]),
    ("C5H12O  tC4H9OCH3", "G"): ("t-C4H9OCH3", "g", None, ["methyl tert-butyl ether", "MTBE"]),
    # condensed inorganics NASA lacks
    ("MnO (S)", "S"): ("MnO", "cr", None, ["manganese(II) oxide"]),
    ("MnO (L)", "L"): ("MnO", "l", None, ["manganese(II) oxide"]),
    ("MnO2(S)", "S"): ("MnO2", "cr", None, ["manganese dioxide"]),
    ("Mn2O3 (S)", "S"): ("Mn2O3", "cr", None, ["manganese(III) oxide"]),
    ("Mn3O4  Solid-A", "S"): ("Mn3O4", "cr", "alpha", ["manganese(II,III) oxide", "hausmannite"]),
    ("Mn3O4  Solid-B", "S"): ("Mn3O4", "cr", "beta", ["manganese(II,III) oxide"]),
    ("MnS   Solid", "S"): ("MnS", "cr", None, ["manganese(II) sulfide"]),
    ("MnS   Liquid", "L"): ("MnS", "l", None, ["manganese(II) sulfide"]),
    ("MnS2 (S)", "S"): ("MnS2", "cr", None, []),
    ("Mn5N2(S)", "S"): ("Mn5N2", "cr", None, []),
    ("NiO  Solid-A", "S"): ("NiO", "cr", "alpha", ["nickel(II) oxide"]),
    ("NiO  Solid-B", "S"): ("NiO", "cr", "beta", ["nickel(II) oxide"]),
    ("NiO  Solid-C", "S"): ("NiO", "cr", "gamma", ["nickel(II) oxide"]),
    ("NiO  Liquid", "L"): ("NiO", "l", None, ["nickel(II) oxide"]),
    ("Cr2FeO4", "S"): ("FeCr2O4", "cr", None, ["chromite"]),
    ("Cr3C2(S)", "S"): ("Cr3C2", "cr", None, ["chromium carbide"]),
    ("Cr7C3(S)", "S"): ("Cr7C3", "cr", None, []),
    ("C6Cr23", "S"): ("Cr23C6", "cr", None, []),
    ("Fe3C (S) Solid-A", "S"): ("Fe3C", "cr", "alpha", ["cementite"]),
    ("Fe3C (S) Solid-B", "S"): ("Fe3C", "cr", "beta", ["cementite"]),
    ("Fe3C (L) Liquid", "L"): ("Fe3C", "l", None, ["cementite"]),
    ("KNO3(a) Rhombic", "C"): ("KNO3", "cr", "alpha", ["potassium nitrate"]),
    ("KNO3(b) Hexagonal", "C"): ("KNO3", "cr", "beta", ["potassium nitrate"]),
    # KNO3(L): the Burcat record has corrupted coefficients and is not used
    ("NH4CLO4(I)", "S"): ("NH4ClO4", "cr", "I", ["ammonium perchlorate"]),
    ("NH4CLO4(II)", "S"): ("NH4ClO4", "cr", "II", ["ammonium perchlorate"]),
    ("NH4NO3(III)", "C"): ("NH4NO3", "cr", "III", ["ammonium nitrate"]),
    ("NH4NO3(II)", "C"): ("NH4NO3", "cr", "II", ["ammonium nitrate"]),
    ("NH4NO3(I)", "C"): ("NH4NO3", "cr", "I", ["ammonium nitrate"]),
    ("NH4NO3(L)", "L"): ("NH4NO3", "l", None, ["ammonium nitrate"]),
    ("MoC  Solid-C", "S"): ("MoC", "cr", None, ["molybdenum carbide"]),
    ("MoO2  Solid", "S"): ("MoO2", "cr", None, ["molybdenum dioxide"]),
    ("Mo2C(S)", "S"): ("Mo2C", "cr", None, []),
    ("SiS2  Solid", "S"): ("SiS2", "cr", None, ["silicon disulfide"]),
    ("SiS2  Liquid", "L"): ("SiS2", "l", None, ["silicon disulfide"]),
}
# NH4NO3(IV): Burcat splits phase IV into two entries (256-298.15, 298.15-305.38 K) with the same label;
# merged here as one two-interval nasa7 entry (see build_burcat).
BURCAT_MERGE = {("NH4NO3(IV)", "C"): ("NH4NO3", "cr", "IV", ["ammonium nitrate"])}

# CRC constant-Cp additions: CAS as listed in the CRC table -> (formula, form, names, expected CRC name).
CRC_PICK = {
    "1314-13-2": ("ZnO", None, ["zinc oxide"], "Zinc oxide"),
    "1314-98-3": ("ZnS", "sphalerite", ["zinc sulfide", "sphalerite"], "Zinc sulfide (sphalerite)"),
    "144-55-8": (
        "NaHCO3",
        None,
        ["sodium hydrogen carbonate", "sodium bicarbonate"],
        "Sodium hydrogen carbonate",
    ),
    "298-14-6": None,  # KHCO3: CRC lacks Cp -> cannot be built (listed in README)
    "7646-85-7": ("ZnCl2", None, ["zinc chloride"], "Zinc chloride"),
    "3486-35-9": ("ZnCO3", None, ["zinc carbonate", "smithsonite"], "Zinc carbonate"),
    "7758-89-6": ("CuCl", None, ["copper(I) chloride"], "Copper(I) chloride"),
    "7447-39-4": ("CuCl2", None, ["copper(II) chloride"], "Copper(II) chloride"),
    "1317-40-4": ("CuS", None, ["copper(II) sulfide"], "Copper(II) sulfide"),
    "22205-45-4": ("Cu2S", None, ["copper(I) sulfide"], "Copper(I) sulfide"),
    "7440-22-4": ("Ag", None, ["silver"], "Silver"),
    "7783-90-6": ("AgCl", None, ["silver chloride"], "Silver(I) chloride"),
    "7785-23-1": ("AgBr", None, ["silver bromide"], "Silver(I) bromide"),
    "20667-12-3": ("Ag2O", None, ["silver oxide"], "Silver(I) oxide"),
    "7761-88-8": ("AgNO3", None, ["silver nitrate"], "Silver(I) nitrate"),
    "7440-57-5": ("Au", None, ["gold"], "Gold"),
    "7440-06-4": ("Pt", None, ["platinum"], "Platinum"),
    "7440-31-5": ("Sn", "gray", ["tin (gray)"], "Tin (gray)"),
    "18282-10-5": ("SnO2", None, ["tin(IV) oxide", "cassiterite"], "Tin(IV) oxide"),
    "21651-19-4": ("SnO", None, ["tin(II) oxide"], "Tin(II) oxide"),
    "7439-96-5": ("Mn", None, ["manganese"], "Manganese"),
    "7440-48-4": ("Co", None, ["cobalt"], "Cobalt"),
    "7440-33-7": ("W", None, ["tungsten"], "Tungsten"),
    "7440-43-9": ("Cd", None, ["cadmium"], "Cadmium"),
    "7631-99-4": ("NaNO3", None, ["sodium nitrate"], "Sodium nitrate"),
    "7783-20-2": ("(NH4)2SO4", None, ["ammonium sulfate"], "Ammonium sulfate"),
    "3811-04-9": ("KClO3", None, ["potassium chlorate"], "Potassium chlorate"),
    "7722-64-7": ("KMnO4", None, ["potassium permanganate"], "Potassium permanganate"),
    "75-20-7": ("CaC2", None, ["calcium carbide"], "Calcium carbide"),
    "7758-87-4": ("Ca3(PO4)2", None, ["calcium phosphate"], "Calcium phosphate"),
    "7681-11-0": ("KI", None, ["potassium iodide"], "Potassium iodide"),
    "7681-82-5": ("NaI", None, None, "Sodium iodide"),  # NASA has NaI(s): skipped if present
    "563-71-3": ("FeCO3", None, ["iron(II) carbonate", "siderite"], "Iron(II) carbonate"),
    "10124-37-5": ("Ca(NO3)2", None, ["calcium nitrate"], "Calcium nitrate"),
    "1302-81-4": ("Al2S3", None, ["aluminium sulfide"], "Aluminum sulfide"),
    "7784-30-7": ("AlPO4", None, ["aluminium phosphate"], "Aluminum phosphate"),
    "7782-40-3": ("C", "diamond", ["diamond"], "Carbon (diamond)"),
    "10294-26-5": ("Ag2SO4", None, ["silver sulfate"], "Silver(I) sulfate"),
    "21548-73-2": ("Ag2S", None, ["silver sulfide"], "Silver(I) sulfide"),
}

# Oxidisers: no table carried by the build packages flags oxidisers, so this curated list names
# well-known oxidisers (reason: strong oxidising agents per general chemistry; common practice, no source).
OXIDISERS = [
    "O2(g)",
    "O3(g)",
    "F2(g)",
    "Cl2(g)",
    "ClF3(g)",
    "ClO2(g)",
    "N2O(g)",
    "NO2(g)",
    "N2O4(g)",
    "N2O5(g)",
    "HNO3(g)",
    "H2O2(g)",
    "H2O2(l)",
    "NF3(g)",
    "F2O(g)",
    "KNO3(cr,alpha)",
    "NaNO3(cr)",
    "NH4NO3(cr,IV)",
    "NH4ClO4(cr,I)",
    "KClO3(cr)",
    "KMnO4(cr)",
    "KO2(cr)",
    "NaO2(cr)",
    "Na2O2(cr,alpha)",
    "K2O2(cr)",
    "AgNO3(cr)",
    "Ca(NO3)2(cr)",
    "MnO2(cr)",
]
# Toxic additions a table misses (reason given per item; common practice, no source).
TOXIC_EXTRA = {
    "HCN(g)": "well-known acutely toxic gas",
    "COCl2(g)": "well-known acutely toxic gas",
    "H2S(g)": "well-known acutely toxic gas",
    "CO(g)": "well-known toxic gas (chemical asphyxiant)",
}
# Flammable additions a table misses (reason: flammable gas; common practice, no source).
FLAMMABLE_EXTRA = {"H2(g)": "flammable gas", "CH4(g)": "flammable gas", "CO(g)": "flammable gas"}

# Toxic threshold: Ontario occupational exposure limit at or below 50 ppm (vapour/gas) or
# 1 mg/m3 (particulates given only in mg/m3). Both thresholds: common practice, no source.
TOXIC_PPM = 50.0
TOXIC_MG_M3 = 1.0


# --------------------------------------------------------------------------------------------
# Readers
# --------------------------------------------------------------------------------------------


def read_tsv(path, required):
    with open(path, encoding="utf-8", newline="") as f:
        rows = list(csv.DictReader(f, delimiter="\t"))
    need(rows and all(c in rows[0] for c in required), f"{path.name}: columns {required} expected")
    return rows


def fnum(x):
    x = (x or "").strip()
    return float(x) if x else None


class _NoBoolSafeLoader(yaml.SafeLoader):
    """Safe loader without YAML 1.1 booleans: species names such as NO, ON must stay strings."""


_NoBoolSafeLoader.yaml_implicit_resolvers = {
    k: [(tag, rx) for tag, rx in v if tag != "tag:yaml.org,2002:bool"]
    for k, v in yaml.SafeLoader.yaml_implicit_resolvers.items()
}


def load_nasa(fname):
    path = cantera_file(fname)
    with open(path, encoding="utf-8") as f:
        # A yaml.SafeLoader subclass (only the bool resolver removed): no object construction.
        doc = yaml.load(f, Loader=_NoBoolSafeLoader)  # noqa: S506
    sp = doc.get("species")
    need(isinstance(sp, list) and len(sp) > 300, f"{fname}: species list changed")
    for s in sp:
        th = s.get("thermo", {})
        if th.get("model") == "NASA9":
            # A NASA-9 entry with a1 = a2 = 0 (the T^-2 and T^-1 Cp terms) is exactly a NASA-7 entry with
            # coefficients a3..a7, b1, b2: Cp, H and S expressions coincide term by term.
            need(
                all(len(c) == 9 and c[0] == 0.0 and c[1] == 0.0 for c in th["data"]),
                f"{fname}: {s['name']}: NASA9 with non-zero a1/a2 cannot be written as NASA7",
            )
            th["data"] = [c[2:] for c in th["data"]]
            th["model"] = "NASA7"
            th["note"] = (
                f"{th.get('note', '')} [NASA-9 with a1=a2=0 in the file, rewritten as NASA-7]".strip()
            )
        need(th.get("model") == "NASA7", f"{fname}: {s.get('name')}: not NASA7")
        tr, data = th.get("temperature-ranges"), th.get("data")
        need(
            len(tr) == len(data) + 1 and all(len(c) == 7 for c in data),
            f"{fname}: {s['name']}: shape",
        )
    return sp


def load_burcat():
    path = pkg_file("thermochem", "BURCAT_THR.xml")
    root = ET.parse(path).getroot()
    out = []
    for sp in root.findall("specie"):
        cas = (sp.get("CAS") or "").strip()
        for ph in sp.findall("phase"):
            tl = ph.find("temp_limit")
            co = ph.find("coefficients")
            need(tl is not None and co is not None, "Burcat: phase without temp_limit/coefficients")

            def coefs(tag, co=co):
                node = co.find(tag)
                need(node is not None, f"Burcat: missing {tag}")
                # some Burcat numbers carry a blank for the exponent sign ("-0.178E 01"): read as "E+"
                vals = {c.get("name"): _bfloat(c.text) for c in node.findall("coef")}
                return [vals[f"a{i}"] for i in range(1, 8)]

            try:
                lo, hi = coefs("range_Tmin_to_1000"), coefs("range_1000_to_Tmax")
            except ValueError:
                # a few Burcat records hold corrupted numbers (e.g. '01839G52E+01'): such a record is
                # never used; if one of BURCAT_PICK is affected the build stops (pick not found)
                continue
            hf = co.find("hf298_div_r")
            out.append(
                {
                    "cas": cas,
                    "formula": ph.find("formula").text,
                    "phase": ph.find("phase").text,
                    "source": (ph.find("source").text or "").strip(),
                    "date": (ph.find("date").text or "").strip(),
                    "Tlow": float(tl.get("low")),
                    "Thigh": float(tl.get("high")),
                    "lo": lo,
                    "hi": hi,
                    "hf298_div_r": _bfloat(hf.text) if hf is not None and hf.text else None,
                    "elements": {
                        e.get("name").strip().capitalize(): float(e.get("num_of_atoms"))
                        for e in ph.find("elements")
                        if float(e.get("num_of_atoms")) != 0.0
                    },
                }
            )
    need(len(out) > 1000, "Burcat XML changed shape")
    return out


def _bfloat(t):
    t = t.strip()
    try:
        return float(t)
    except ValueError:
        return float(re.sub(r"\s+", "", t.replace("E ", "E+").replace("e ", "e+")))


def burcat_poly(b):
    """Burcat polynomials share a fixed common temperature of 1000 K (Burcat format)."""
    lo_zero, hi_zero = not any(b["lo"]), not any(b["hi"])
    if b["Thigh"] <= 1000.0 or hi_zero:
        return [b["Tlow"], b["Thigh"]], [b["lo"]]
    if b["Tlow"] >= 1000.0 or lo_zero:
        return [b["Tlow"], b["Thigh"]], [b["hi"]]
    return [b["Tlow"], 1000.0, b["Thigh"]], [b["lo"], b["hi"]]


def load_janaf_tables():
    """index -> {phase, elements, charge, display, dHf298 (J/mol), S298}"""
    d = json.loads(pkg_file("janaf", "janaf.json").read_text(encoding="utf-8"))
    need(len(d["display"]) == len(d["index"]) > 1500, "janaf.json changed shape")
    out = {}
    for disp, idx in zip(d["display"], d["index"], strict=True):
        m = re.search(r"\(([^)]*)\)$", disp)
        need(m, f"janaf display {disp}")
        lines = pkg_file("janaf", "data", f"{idx}.txt").read_text(encoding="utf-8").splitlines()
        head = lines[0].split("\t")
        need(len(head) >= 2 and lines[1].startswith("T(K)"), f"janaf {idx}: header changed")
        fm = re.match(r"^(.*)\(([^()]*)\)$", head[1].strip())
        comp, charge = {}, 0
        body = fm.group(1)
        cm = re.search(r"(\d*)([+-])$", body)
        if cm:
            charge = (int(cm.group(1) or 1)) * (1 if cm.group(2) == "+" else -1)
            body = body[: cm.start()]
        for el, n in re.findall(r"([A-Z][a-z]?)(\d*\.?\d*)", body):
            comp[el] = comp.get(el, 0.0) + (float(n) if n else 1.0)
        row = None
        for ln in lines[2:]:
            p = ln.split("\t")
            if p and p[0].strip() == "298.15":
                row = p
        h = s = None
        if row is not None:
            try:
                h = float(row[5]) * 1000.0
            except (ValueError, IndexError):
                h = None
            try:
                s = float(row[2])
            except (ValueError, IndexError):
                s = None
        out[idx] = {
            "phase": m.group(1),
            "elements": comp,
            "charge": charge,
            "display": disp,
            "dHf298": h,
            "S298": s,
        }
    return out


# --------------------------------------------------------------------------------------------
# Formula helpers
# --------------------------------------------------------------------------------------------


def mech_formula(name):
    """NASA upper-case element spellings -> chemists' spellings."""
    return name.replace("CL", "Cl").replace("AL", "Al")


def clean_elements(comp):
    el = {k: float(v) for k, v in comp.items() if k != "E"}
    el = {k: (int(v) if v.is_integer() else v) for k, v in el.items()}
    charge = -int(comp.get("E", 0))
    return dict(sorted(el.items())), charge


def same_comp(a, b):
    return set(a) == set(b) and all(abs(float(a[k]) - float(b[k])) < 1e-9 for k in a)


# --------------------------------------------------------------------------------------------
# Entry construction
# --------------------------------------------------------------------------------------------


def make_id(formula, phase, form):
    return f"{formula}({phase})" if not form else f"{formula}({phase},{form})"


def base_entry(formula, elements, charge, phase, form, names, Trange, els):
    return {
        "id": make_id(formula, phase, form),
        "formula": formula,
        "elements": elements,
        "charge": charge,
        "phase": phase,
        "form": form,
        "names": list(names or []),
        "cas": None,
        "molar_mass_g_per_mol": molar_mass(elements, els),
        "T_range_K": [float(Trange[0]), float(Trange[1])],
        "reference_state_of": None,
        "hypothetical_298": not (Trange[0] <= T_REF <= Trange[1]),
        "notes": [],
    }


RANGE_300_NOTE = (
    "source range starts at 300 K; lower end moved to 298.15 K (1.85 K extrapolation of the "
    "first interval, coefficients unchanged): these fits were made to tables that start at "
    "298.15 K, and the 298.15 K state must be usable. Common practice, no source."
)


def extend_300(breaks):
    """Old-format NASA/Burcat fits label their lower limit 300 K; extend the first interval to 298.15 K."""
    breaks = [float(t) for t in breaks]
    if breaks[0] == 300.0:
        breaks[0] = T_REF
    return breaks


def poly_entry(e, source, entry_label, breaks, coeffs, src_breaks=None):
    h298, s298 = poly_298(breaks, coeffs)
    gas = e["phase"] == "g"
    hyp = e["hypothetical_298"]
    if gas:
        hp = "nasa-ion-dHf" if e["charge"] else "nasa-gas-dHf"
        sp = "gas-S"
    else:
        hp = "hypothetical-dHf" if hyp else "condensed-dHf"
        sp = "hypothetical-S" if hyp else "condensed-S"
    e["dHf_298"] = policy_block(h298, hp, source, entry_label)
    # condensed-S is value-dependent: 0.3 J/(mol K) + 0.5 % of S (see POLICY).
    su = 0.3 + 0.005 * abs(s298) if sp == "condensed-S" else None
    e["S_298"] = policy_block(s298, sp, source, entry_label, u=su)
    cpol = "cp-gas-poly" if gas else "cp-condensed-poly"
    u = POLICY[cpol][1]
    e["cp"] = {
        "model": "nasa7",
        "T_breaks_K": [float(t) for t in breaks],
        "coefficients": [[float(x) for x in c] for c in coeffs],
        "u_rel": u,
        "source": source,
        "entry": entry_label,
        "uncertainty": {
            "stated": u,
            "convention": "standard",
            "divisor": 1.0,
            "source": f"policy:{cpol}",
            "assumed": True,
        },
    }
    if breaks[0] == T_REF and e["T_range_K"][0] == T_REF and "[300" in str(e.get("_src_range", "")):
        e["notes"].append(RANGE_300_NOTE)
    if hyp:
        e["notes"].append(
            "298.15 K lies outside T_range_K: dHf_298 and S_298 are the polynomial's "
            "extrapolated bookkeeping constants, not a state that exists"
        )
    return e


def nasa_condensed_split(name):
    m = re.match(r"^(.*)\(([^()]*)\)(,.*)?$", name)
    need(m, f"NASA condensed name {name} not understood")
    return m.group(1), m.group(2)


def build_nasa(els, notes_unmapped):
    entries = []
    for fname, gas in (("nasa_gas.yaml", True), ("nasa_condensed.yaml", False)):
        for s in load_nasa(fname):
            name = s["name"]
            if name in SKIP_NASA:
                notes_unmapped.append(f"NASA {name}: {SKIP_NASA[name]}")
                continue
            elements, charge = clean_elements(s["composition"])
            if name in NASA_CHARGE_FIX:
                need(charge == 0, f"NASA {name}: composition now carries a charge; drop the fix")
                charge = NASA_CHARGE_FIX[name]
            if any(k not in els for k in elements):
                notes_unmapped.append(
                    f"NASA {name}: element symbol(s) {sorted(k for k in elements if k not in els)} "
                    "not in the periodic table (deuterium)"
                )
                continue
            th = s["thermo"]
            breaks, coeffs = extend_300(th["temperature-ranges"]), th["data"]
            note = str(th.get("note", "")).strip()
            if gas:
                if name in NASA_GAS:
                    formula, names = NASA_GAS[name]
                else:
                    formula, names = mech_formula(name), []
                    need("," not in name, f"NASA gas {name}: isomer label without curated formula")
                if name == "C3H6O":
                    formula, names = "C3H6O", []  # isomer not identified by the NASA note
                phase, form = "g", None
            else:
                base, label = nasa_condensed_split(name)
                need(label in LABELS, f"NASA condensed {name}: unknown phase label {label}")
                phase, form = LABELS[label]
                formula, names = NASA_COND.get(base, (mech_formula(base), []))
                if base == "H2O":
                    names = ["ice"] if phase == "cr" else ["water"]
            e = base_entry(
                formula, elements, charge, phase, form, names, (breaks[0], breaks[-1]), els
            )
            e["_src_range"] = [float(t) for t in th["temperature-ranges"]]
            label_text = f"{fname} {name}"
            poly_entry(e, "nasa-glenn", label_text, breaks, coeffs)
            if note:
                e["notes"].append(f"NASA data note: {note}")
            if charge:
                e["notes"].append(
                    "ion: NASA/JANAF thermal-electron convention (the electron gas e-(g) is a "
                    "species with its own H and S; not the ion convention of ATcT/NBS)"
                )
            if name == "C3H6O":
                e["notes"].append(
                    "NASA label 'C3H6O' does not say which isomer; formula kept molecular, "
                    "no name or CAS assigned"
                )
            e["_origin"] = ("nasa", name)
            entries.append(e)
    return entries


def build_burcat(els, existing_keys):
    bur = load_burcat()
    entries = []
    seen = set()
    merged = {}
    for b in bur:
        key = (b["formula"], b["phase"])
        if key in BURCAT_MERGE:
            merged.setdefault(key, []).append(b)
            continue
        if key not in BURCAT_PICK:
            continue
        need(key not in seen, f"Burcat pick {key} is not unique")
        seen.add(key)
        formula, phase, form, names = BURCAT_PICK[key]
        if (formula, phase, form) in existing_keys:
            continue
        elements = {
            k: (int(v) if float(v).is_integer() else v) for k, v in sorted(b["elements"].items())
        }
        breaks, coeffs = burcat_poly(b)
        breaks = extend_300(breaks)
        e = base_entry(formula, elements, 0, phase, form, names, (breaks[0], breaks[-1]), els)
        e["_src_range"] = burcat_poly(b)[0]
        poly_entry(
            e,
            "burcat",
            f"BURCAT_THR.xml CAS {b['cas']} '{b['formula']}' ({b['source']} {b['date']})",
            breaks,
            coeffs,
        )
        e["_burcat_cas"] = b["cas"]
        _burcat_hf_note(e, b)
        e["_origin"] = ("burcat", b["formula"])
        entries.append(e)
    missing = set(BURCAT_PICK) - seen
    need(not missing, f"Burcat picks not found: {sorted(missing)}")
    for key, parts in merged.items():
        formula, phase, form, names = BURCAT_MERGE[key]
        parts.sort(key=lambda b: b["Tlow"])
        need(
            len(parts) == 2 and abs(parts[0]["Thigh"] - parts[1]["Tlow"]) < 1e-9,
            f"Burcat merge {key}",
        )
        breaks = [parts[0]["Tlow"], parts[0]["Thigh"], parts[1]["Thigh"]]
        coeffs = [burcat_poly(parts[0])[1][0], burcat_poly(parts[1])[1][0]]
        elements = {
            k: (int(v) if float(v).is_integer() else v)
            for k, v in sorted(parts[0]["elements"].items())
        }
        e = base_entry(formula, elements, 0, phase, form, names, (breaks[0], breaks[-1]), els)
        poly_entry(
            e,
            "burcat",
            f"BURCAT_THR.xml CAS {parts[0]['cas']} '{key[0]}' (two entries merged)",
            breaks,
            coeffs,
        )
        e["_burcat_cas"] = parts[0]["cas"]
        e["_origin"] = ("burcat", key[0])
        entries.append(e)
    return entries, bur


def _burcat_hf_note(e, b):
    if b["hf298_div_r"] is not None:
        hf = b["hf298_div_r"] * R
        d = hf - e["dHf_298"]["value"]
        if abs(d) > 100.0:  # 100 J/mol: larger than fit round-off (common practice, no source)
            e["notes"].append(
                f"Burcat's stated HF298 ({hf:.0f} J/mol) differs from its polynomial's H(298.15) by "
                f"{d:.0f} J/mol; the polynomial's value is used so that H(T) stays continuous"
            )


def build_crc(els, existing_keys):
    path = pkg_file(
        "chemicals",
        "Heat Capacity",
        "CRC Standard Thermodynamic Properties of Chemical Substances.tsv",
    )
    rows = read_tsv(path, ["CAS", "Chemical", "Hfs", "S0s", "Cps"])
    by_cas = {r["CAS"]: r for r in rows}
    from chemicals.phase_change import Tm

    entries, skipped = [], []
    for cas, pick in CRC_PICK.items():
        if pick is None:
            skipped.append(f"CRC {cas}: no Cp(298) in the CRC table")
            continue
        formula, form, names, crc_name = pick
        need(
            cas in by_cas and by_cas[cas]["Chemical"].strip() == crc_name,
            f"CRC row {cas} ({crc_name}) changed",
        )
        r = by_cas[cas]
        hf, s0, cp = fnum(r["Hfs"]), fnum(r["S0s"]), fnum(r["Cps"])
        if hf is None or s0 is None or cp is None:
            skipped.append(f"CRC {cas} {crc_name}: incomplete solid data")
            continue
        if any(k[0] == formula and k[1] == "cr" for k in existing_keys):
            continue  # a temperature-dependent source already has it
        elements = {k: v for k, v in sorted(simple_formula_parser(_plain(formula)).items())}
        tmax = 500.0
        try:
            tm = Tm(cas)
        except Exception:  # chemicals raises for unknown CAS; no melting point then
            tm = None
        if tm and T_REF < tm < tmax:
            tmax = float(tm)
        e = base_entry(
            formula, elements, 0, "cr", form, names if names is not None else [], (250.0, tmax), els
        )
        e["cas"] = cas
        lab = f"CRC table CAS {cas} '{crc_name}' (solid)"
        e["dHf_298"] = policy_block(hf, "crc-dHf", "crc-298", lab)
        e["S_298"] = policy_block(s0, "crc-S", "crc-298", lab)
        u = POLICY["cp-crc-constant"][1]
        e["cp"] = {
            "model": "constant",
            "cp_J_per_mol_K": cp,
            "u_rel": u,
            "source": "crc-298",
            "entry": lab,
            "uncertainty": {
                "stated": u,
                "convention": "standard",
                "divisor": 1.0,
                "source": "policy:cp-crc-constant",
                "assumed": True,
            },
        }
        e["notes"].append(
            "only 298.15 K data available: constant Cp(298.15) with a narrow range and a large "
            "assumed Cp uncertainty (policy cp-crc-constant)"
        )
        if tmax < 500.0:
            e["notes"].append(
                f"T_range_K upper end = melting point {tmax} K from chemicals.phase_change.Tm"
            )
        e["_origin"] = ("crc", cas)
        entries.append(e)
    return entries, skipped


def _plain(formula):
    """Formula string to something chemicals.simple_formula_parser / nested parser understands."""
    from chemicals.elements import nested_formula_parser

    return formula if "(" not in formula else hill(nested_formula_parser(formula))


# --------------------------------------------------------------------------------------------
# Identifiers (CAS, names)
# --------------------------------------------------------------------------------------------


def assign_identifiers(entries, atct_g, atct_l):
    atct_by_name = {}
    for r in atct_g + atct_l:
        atct_by_name.setdefault(r["Chemical"].strip().lower(), r)
    cache = {}

    def lookup(q):
        if q not in cache:
            try:
                cache[q] = search_chemical(q)
            except Exception:  # chemicals raises ValueError for unknown identifiers
                cache[q] = None
        return cache[q]

    for e in entries:
        if e["cas"] or e["charge"] or not e["elements"]:
            continue
        cas = None
        for n in e["names"]:
            r = atct_by_name.get(n.lower())
            if r and same_comp(_atct_comp(r), e["elements"]):
                cas, why = r["CAS"], f"CAS from ATcT table entry '{r['Chemical']}' (name match)"
                break
        if cas is None:
            for q in e["names"][:2] or ([e["formula"]] if e["phase"] != "g" else []):
                m = lookup(q)
                if m is not None and same_comp(simple_formula_parser(m.formula), e["elements"]):
                    cas, why = m.CASs, f"CAS from chemicals identifier DB lookup of '{q}'"
                    if not e["names"] and m.common_name:
                        e["names"] = [m.common_name]
                    break
        if cas is None and e.get("_burcat_cas") and re.match(r"^\d+-\d\d-\d$", e["_burcat_cas"]):
            cas, why = e["_burcat_cas"], "CAS from the Burcat entry"
        if cas:
            e["cas"] = cas
            e["notes"].append(why)


def _atct_comp(r):
    f = r["Formula"].rsplit(" (", 1)[0]
    if re.search(r"[\]+-]", f.replace("(", "").replace(")", "")) and (
        "+" in f or "]-" in f or f.endswith("-")
    ):
        return {"_ion": 1}
    from chemicals.elements import nested_formula_parser

    try:
        return nested_formula_parser(f)
    except Exception:
        return {"_unparsed": 1}


def atct_ion(r):
    f = r["Formula"].rsplit(" (", 1)[0]
    return "+" in f or f.endswith("-") or "]-" in f


def apply_atct(entries, atct_g, atct_l, gaps):
    """ATcT dHf(298.15) replaces the polynomial's for neutral gas/liquid entries matched by CAS; for
    unnamed neutral gases a unique-composition match with agreement within 4 kJ/mol is accepted
    (4 kJ/mol is below typical isomer differences; common practice, no source)."""
    tables = {"g": atct_g, "l": atct_l}
    for ph, rows in tables.items():
        by_cas = {}
        for r in rows:
            if atct_ion(r):
                continue
            by_cas.setdefault(r["CAS"], []).append(r)
        by_comp = {}
        for r in rows:
            if not atct_ion(r):
                by_comp.setdefault(hill(_atct_comp(r)), []).append(r)
        phase_entries = [
            e for e in entries if e["phase"] == ph and not e["charge"] and e["elements"]
        ]
        comp_count = {}
        for e in phase_entries:
            comp_count[hill(e["elements"])] = comp_count.get(hill(e["elements"]), 0) + 1
        for e in phase_entries:
            r = None
            if e["cas"] and len(by_cas.get(e["cas"], [])) == 1:
                r = by_cas[e["cas"]][0]
            elif (
                not e["cas"]
                and comp_count[hill(e["elements"])] == 1
                and len(by_comp.get(hill(e["elements"]), [])) == 1
            ):
                cand = by_comp[hill(e["elements"])][0]
                hv = fnum(cand[list(cand)[4]])
                if hv is not None and abs(hv - e["dHf_298"]["value"]) <= 4000.0:
                    r = cand
                    e["cas"] = cand["CAS"]
                    if not e["names"]:
                        e["names"] = [cand["Chemical"].strip()]
                    e["notes"].append(
                        f"CAS and name from ATcT entry '{cand['Chemical']}' (unique composition, "
                        "dHf agreement within 4 kJ/mol)"
                    )
            if r is None:
                continue
            hcol = "Hfg" if ph == "g" else "Hfl"
            hv, unc = fnum(r[hcol]), fnum(r["uncertainty"])
            need(hv is not None and unc is not None, f"ATcT row {r['CAS']} incomplete")
            old = e["dHf_298"]
            label = f"{r['CAS']} {r['Formula'].strip()}"
            gaps.setdefault(e["id"], {})["atct-1.112"] = hv
            if e["reference_state_of"]:
                continue
            gap = hv - old["value"]
            if abs(gap) > DISPUTE_GAP:
                e["dHf_298"]["u"] = abs(gap) / math.sqrt(3.0)
                e["dHf_298"]["uncertainty"] = {
                    "stated": abs(gap),
                    "convention": "half-width-rectangular",
                    "divisor": math.sqrt(3.0),
                    "source": "policy:disputed-dHf",
                    "assumed": True,
                }
                e["notes"].append(
                    f"ATcT 1.112 ({label}) gives {hv:.0f} J/mol, {gap:+.0f} J/mol from the polynomial; "
                    "gap exceeds 20 kJ/mol, polynomial value kept with widened uncertainty "
                    "(policy disputed-dHf) pending review"
                )
                continue
            e["dHf_298"] = vblock(
                hv, unc / 1.96, "atct-1.112", label, unc, "expanded-95", 1.96, "atct-1.112", False
            )
            e["dHf_298"]["replaced"] = {
                "value": old["value"],
                "source": old["source"],
                "entry": old["entry"],
                "reason": "ATcT 1.112 (thermochemical network) is better supported than "
                "the polynomial's own H(298.15)",
            }


# --------------------------------------------------------------------------------------------
# Reference states
# --------------------------------------------------------------------------------------------


def set_reference_states(entries):
    """Per element: among single-element entries whose T_range contains 298.15 K, the one with the
    lowest H(298.15) (NASA sets the reference state to 0 by construction); checked to be ~0."""
    best = {}
    for e in entries:
        if len(e["elements"]) != 1 or e["charge"] or e["hypothetical_298"]:
            continue
        (el,) = e["elements"]
        v = e["dHf_298"]["value"]
        if el not in best or v < best[el]["dHf_298"]["value"] - 1e-9:
            best[el] = e
    for el, e in sorted(best.items()):
        v = e["dHf_298"]["value"]
        if abs(v) > REF_ZERO_TOL:
            e["notes"].append(
                f"not made reference state of {el}: lowest H(298.15) is {v:.1f} J/mol, not ~0 "
                "(the element's reference form is missing from the sources)"
            )
            continue
        e["reference_state_of"] = el
        if v != 0.0:
            e["notes"].append(
                f"dHf_298 set to exactly 0 (reference state); polynomial H(298.15) = {v:.3f} J/mol"
            )
        e["dHf_298"]["value"] = 0.0
        e["dHf_298"]["u"] = 0.0
        e["dHf_298"]["uncertainty"] = {
            "stated": 0.0,
            "convention": "standard",
            "divisor": 1.0,
            "source": "policy:reference-state",
            "assumed": True,
        }
        e["dHf_298"]["entry"] += " (reference state: 0 by definition)"


# ATcT value differing from the polynomial's by more than this is treated as a dispute (larger than
# any ATcT-vs-JANAF revision of a stable species seen here except a few; common practice, no source).
DISPUTE_GAP = 20000.0
POLICY["disputed-dHf"] = (
    "When ATcT and the polynomial's dHf(298.15) differ by more than 20 kJ/mol the "
    "polynomial value (consistent with its own S and Cp) is kept and its uncertainty is "
    "set to a rectangular half-width equal to the gap (u = gap/sqrt(3)), so the Monte "
    "Carlo covers both. Common practice, no source.",
    None,
)
POLICY["reference-state"] = (
    "dHf(298.15) of an element in its reference state is 0 by definition, u = 0.",
    0.0,
)


# --------------------------------------------------------------------------------------------
# 1 bar check
# --------------------------------------------------------------------------------------------


def check_one_bar(entries, janaf):
    """Compare polynomial S(298.15) of a few gases with NIST-JANAF (1 bar) tables."""
    picks = {
        "CO2(g)": "C-095",
        "H2O(g)": "H-064",
        "N2(g)": "N-023",
        "CH4(g)": "C-067",
        "O2(g)": "O-029",
        "CO(g)": "C-093",
        "Ar(g)": "Ar-001",
        "H2(g)": "H-050",
        "NH3(g)": "H-083",
    }
    out = {}
    by_id = {e["id"]: e for e in entries}
    lnp = R * math.log(101325.0 / 100000.0)
    for sid, idx in picks.items():
        j = janaf[idx]
        need(
            j["S298"] is not None and same_comp(j["elements"], by_id[sid]["elements"]),
            f"1-bar check {sid}/{idx}",
        )
        s_poly = by_id[sid]["S_298"]["value"]
        out[sid] = {
            "janaf_index": idx,
            "S_poly": round(s_poly, 4),
            "S_janaf_1bar": j["S298"],
            "diff": round(s_poly - j["S298"], 4),
            "expected_if_1atm": round(-lnp, 4),
        }
    # 1 atm entropies would be lower than 1 bar ones by R ln(1.01325) = 0.1094 J/(mol K); the median
    # difference must be far closer to 0 than to -0.109 (individual species may differ because NASA
    # fitted newer data than JANAF, e.g. CH4).
    diffs = sorted(v["diff"] for v in out.values())
    med = diffs[len(diffs) // 2]
    need(abs(med) < 0.03, f"1-bar check failed: {out}")
    return out


# --------------------------------------------------------------------------------------------
# JANAF matching and source gaps
# --------------------------------------------------------------------------------------------


def janaf_matches(entries, janaf):
    by_key = {}
    for idx, j in sorted(janaf.items()):
        if j["phase"] in ("g", "l", "cr", "ref"):
            by_key.setdefault((hill(j["elements"]), j["charge"], j["phase"]), []).append(idx)
    comp_count = {}
    for e in entries:
        k = (hill(e["elements"]), e["charge"], e["phase"])
        comp_count[k] = comp_count.get(k, 0) + 1
    out = {}
    for e in entries:
        k = (hill(e["elements"]), e["charge"], e["phase"])
        cands = by_key.get(k, [])
        if not cands and e["phase"] == "g" and e["reference_state_of"]:
            # gaseous reference elements (N2, O2, H2, noble gases): JANAF tabulates them as the 'ref' table
            cands = by_key.get((k[0], k[1], "ref"), [])
        if not cands:
            continue
        if len(cands) > 1 and e["form"]:
            words = {
                "alpha": "alpha",
                "beta": "beta",
                "gamma": "gamma",
                "delta": "delta",
                "rutile": "rutile",
                "calcite": "calcite",
                "alpha-quartz": "alpha quartz",
                "beta-quartz": "beta quartz",
                "graphite": "graphite",
                "orthorhombic": "rhombic",
                "monoclinic": "monoclinic",
            }
            w = words.get(e["form"])
            cands = [c for c in cands if w and w in janaf[c]["display"].lower()]
        if (len(cands) == 1 and comp_count[k] == 1) or (len(cands) == 1 and e["form"]):
            out[e["id"]] = cands[0]
        elif len(cands) == 1 and janaf[cands[0]]["dHf298"] is not None:
            # isomers share one composition (e.g. acetylene / vinylidene): the JANAF table goes to the
            # isomer whose dHf(298.15) is closest, and only when within 10 kJ/mol (below typical
            # isomer gaps; common practice, no source)
            jv = janaf[cands[0]]["dHf298"]
            sib = [x for x in entries if (hill(x["elements"]), x["charge"], x["phase"]) == k]
            best = min(sib, key=lambda x: (abs(x["dHf_298"]["value"] - jv), x["id"]))
            if best is e and abs(e["dHf_298"]["value"] - jv) <= 10000.0:
                out[e["id"]] = cands[0]
    return out


def build_gaps(entries, gaps_atct, janaf, jmatch, janaf_tsv, burcat_all):
    res = {}
    bur_by_cas = {}
    for b in burcat_all:
        for c in b["cas"].split():
            bur_by_cas.setdefault((c, "g" if b["phase"] == "G" else "cond"), []).append(b)
    tsv_by_cas = {r["CAS"]: r for r in janaf_tsv}
    for e in entries:
        v = {}
        d = e["dHf_298"]
        if d["source"] in ("nasa-glenn", "burcat", "crc-298"):
            v[d["source"]] = d["value"]
        if "replaced" in d:
            v[d["replaced"]["source"]] = d["replaced"]["value"]
        if e["id"] in gaps_atct:
            v.update(gaps_atct[e["id"]])
        if e["id"] in jmatch and janaf[jmatch[e["id"]]]["dHf298"] is not None:
            v["janaf-4 " + jmatch[e["id"]]] = janaf[jmatch[e["id"]]]["dHf298"]
        if e["cas"] and e["cas"] in tsv_by_cas and e["phase"] in ("g", "l"):
            x = fnum(tsv_by_cas[e["cas"]]["Hfg" if e["phase"] == "g" else "Hfl"])
            if x is not None:
                v["janaf-1998-tsv"] = x
        if e["cas"] and e["phase"] == "g" and d["source"] != "burcat":
            bs = [
                b
                for b in bur_by_cas.get((e["cas"], "g"), [])
                if same_comp(b["elements"], e["elements"])
            ]
            if len(bs) == 1:
                bb = burcat_poly(bs[0])
                v["burcat"] = poly_298(*bb)[0]
        if e["reference_state_of"]:
            continue
        if len(v) >= 2:
            keys = sorted(v)
            pair = {
                f"{a} - {b}": round(v[a] - v[b], 3)
                for i, a in enumerate(keys)
                for b in keys[i + 1 :]
            }
            res[e["id"]] = {
                "values_J_per_mol": {k: round(v[k], 3) for k in keys},
                "differences_J_per_mol": pair,
                "max_abs_gap_J_per_mol": round(max(abs(x) for x in pair.values()), 3),
            }
    return res


# --------------------------------------------------------------------------------------------
# Hazards
# --------------------------------------------------------------------------------------------


def build_hazards(entries):
    by_cas = {}
    for e in sorted(entries, key=lambda e: ({"g": 0, "l": 1, "cr": 2}[e["phase"]], e["id"])):
        if e["cas"]:
            by_cas.setdefault(e["cas"], e)
    rows = []
    iec = read_tsv(pkg_file("chemicals", "Safety", "IS IEC 60079-20-1 2010.tsv"), ["CAS", "LFL"])
    nfpa = read_tsv(pkg_file("chemicals", "Safety", "NFPA 497 2008.tsv"), ["CAS", "LFL"])
    done = set()
    for table, label in ((iec, "IEC 60079-20-1"), (nfpa, "NFPA 497")):
        for r in table:
            lfl = fnum(r["LFL"])
            if lfl is None or r["CAS"] not in by_cas or (r["CAS"], "flammable") in done:
                continue
            e = by_cas[r["CAS"]]
            done.add((r["CAS"], "flammable"))
            rows.append(
                (
                    e["cas"],
                    e["formula"],
                    _nm(e),
                    "flammable",
                    f"LFL {lfl * 100:.3g} vol% ({label})",
                    f"chemicals {VERS['chemicals']} Safety/{'IS IEC 60079-20-1 2010.tsv' if label.startswith('IEC') else 'NFPA 497 2008.tsv'}",
                )
            )
    ont = read_tsv(
        pkg_file("chemicals", "Safety", "Ontario Exposure Limits.tsv"),
        ["CASRN", "Time-Weighted Average Limit (TWA)", "Ceiling Limit (C)"],
    )
    for r in ont:
        cas = (r["CASRN"] or "").strip()
        if cas not in by_cas or (cas, "toxic") in done:
            continue
        hit = None
        for col, short in (
            ("Time-Weighted Average Limit (TWA)", "TWA"),
            ("Ceiling Limit (C)", "ceiling"),
            ("Short-Term Exposure Limit (STEL)", "STEL"),
        ):
            val = (r.get(col) or "").strip()
            m = re.match(r"^([\d.]+)\s*(ppm|mg/m3)", val)
            if m:
                x, unit = float(m.group(1)), m.group(2)
                if (unit == "ppm" and x <= TOXIC_PPM) or (unit == "mg/m3" and x <= TOXIC_MG_M3):
                    hit = f"{short} {m.group(1)} {unit} (Ontario OEL)"
                break  # only the first limit that is given decides
        if hit:
            e = by_cas[cas]
            done.add((cas, "toxic"))
            rows.append(
                (
                    cas,
                    e["formula"],
                    _nm(e),
                    "toxic",
                    hit,
                    f"chemicals {VERS['chemicals']} Safety/Ontario Exposure Limits.tsv",
                )
            )
    by_id = {e["id"]: e for e in entries}
    for flag, items in (
        ("toxic", TOXIC_EXTRA),
        ("flammable", FLAMMABLE_EXTRA),
        ("oxidiser", {i: "well-known oxidiser" for i in OXIDISERS}),
    ):
        for sid, why in items.items():
            need(sid in by_id, f"curated hazard species {sid} not in library")
            e = by_id[sid]
            key = (e["cas"] or sid, flag)
            if key in done:
                continue
            done.add(key)
            rows.append(
                (
                    e["cas"] or "",
                    e["formula"],
                    _nm(e),
                    flag,
                    f"curated: {why}",
                    "curated list in build_species_library.py (common practice, no source)",
                )
            )
    rows.sort(key=lambda r: (r[3], r[1], r[0]))
    buf = io.StringIO()
    w = csv.writer(buf, lineterminator="\n")
    w.writerow(["cas", "formula", "name", "flag", "basis", "source"])
    w.writerows(rows)
    return buf.getvalue(), len(rows)


def _nm(e):
    return e["names"][0] if e["names"] else ""


# --------------------------------------------------------------------------------------------
# Main
# --------------------------------------------------------------------------------------------


def canonical_hash(species):
    return hashlib.sha256(
        json.dumps(species, sort_keys=True, separators=(",", ":"), ensure_ascii=True).encode(
            "utf-8"
        )
    ).hexdigest()


def _poly_h(e, T):
    """H(T) on the dHf scale from an entry's nasa7 block (J/mol); None for other Cp models."""
    cp = e["cp"]
    if cp["model"] != "nasa7":
        return None
    br, co = cp["T_breaks_K"], cp["coefficients"]
    h = R * T * h_RT(co[_interval(br, T)], T)
    return e["dHf_298"]["value"] + h - poly_298(br, co)[0]


def transition_parent(e, by_formula):
    """The condensed neighbour a hypothetical entry is carried from (same rule as the kernel's
    feasibly.library.Library.transition_parent): same formula, condensed, and its range touches
    this entry's range at the end nearer 298.15 K."""
    lo, hi = e["T_range_K"]
    t_a = min(max(T_REF, lo), hi)
    for other in by_formula.get(e["formula"], []):
        if other is e or other["phase"] == "g" or e["phase"] == "g":
            continue
        olo, ohi = other["T_range_K"]
        if t_a == lo and math.isclose(ohi, lo, rel_tol=1e-9):
            return other, t_a
        if t_a == hi and math.isclose(olo, hi, rel_tol=1e-9):
            return other, t_a
    return None, t_a


def apply_transition_policy(entries):
    """Re-state the uncertainty of hypothetical entries carried from a neighbour (see POLICY)."""
    by_formula = {}
    for e in entries:
        by_formula.setdefault(e["formula"], []).append(e)
    count = 0
    for e in entries:
        if (
            not e["hypothetical_298"]
            or e["dHf_298"]["uncertainty"].get("source") != "policy:hypothetical-dHf"
        ):
            continue
        parent, t_a = transition_parent(e, by_formula)
        if parent is None:
            continue
        h_self, h_parent = _poly_h(e, t_a), _poly_h(parent, t_a)
        if h_self is None or h_parent is None:
            continue
        dh_tr = h_self - h_parent
        u = 0.05 * abs(dh_tr) + 200.0
        entry = e["dHf_298"]["entry"]
        e["dHf_298"] = policy_block(
            e["dHf_298"]["value"], "transition-dHf", e["dHf_298"]["source"], entry, u=u
        )
        e["S_298"] = policy_block(
            e["S_298"]["value"], "transition-S", e["S_298"]["source"], e["S_298"]["entry"]
        )
        e["notes"].append(
            f"carried from {parent['id']} at {t_a:g} K (transition enthalpy {dh_tr / 1000:.3f} kJ/mol "
            "from the two polynomials); dHf_298.u is the transition enthalpy's uncertainty"
        )
        count += 1
    return count


def main():
    els = build_elements()
    unmapped = []
    entries = build_nasa(els, unmapped)
    keys = {(e["formula"], e["phase"], e["form"]) for e in entries}
    bur_entries, burcat_all = build_burcat(els, keys)
    entries += bur_entries
    keys = {(e["formula"], e["phase"], e["form"]) for e in entries}
    crc_entries, crc_skipped = build_crc(els, keys)
    entries += crc_entries
    unmapped += crc_skipped

    atct_g = read_tsv(
        pkg_file("chemicals", "Reactions", "ATcT 1.112 (g).tsv"),
        ["CAS", "Chemical", "Formula", "Hfg", "uncertainty"],
    )
    atct_l = read_tsv(
        pkg_file("chemicals", "Reactions", "ATcT 1.112 (l).tsv"),
        ["CAS", "Chemical", "Formula", "Hfl", "uncertainty"],
    )
    janaf_tsv = read_tsv(
        pkg_file("chemicals", "Reactions", "JANAF_1998.tsv"), ["CAS", "Hfl", "Hfg"]
    )
    assign_identifiers(entries, atct_g, atct_l)
    set_reference_states(entries)
    gaps_atct = {}
    apply_atct(entries, atct_g, atct_l, gaps_atct)
    n_chained = apply_transition_policy(entries)
    need(n_chained > 50, f"only {n_chained} transition-chained entries: the rule stopped matching")

    ids = [e["id"] for e in entries]
    dup = sorted({i for i in ids if ids.count(i) > 1})
    need(not dup, f"duplicate ids: {dup}")

    janaf = load_janaf_tables()
    one_bar = check_one_bar(entries, janaf)
    jmatch = janaf_matches(entries, janaf)
    gaps = build_gaps(entries, gaps_atct, janaf, jmatch, janaf_tsv, burcat_all)

    for e in entries:
        e.pop("_origin", None)
        e.pop("_burcat_cas", None)
        e.pop("_src_range", None)
        e["notes"] = sorted(set(e["notes"]), key=e["notes"].index)
    entries.sort(key=lambda e: e["id"])
    species = entries
    lib = {
        "schema": "feasibly-species",
        "schema_version": 1,
        "library_version": LIBRARY_VERSION,
        "content_sha256": canonical_hash(species),
        "standard_pressure_Pa": P_STANDARD,
        "sources": SOURCES,
        "uncertainty_policy": {k: v[0] for k, v in sorted(POLICY.items())},
        "species": species,
    }
    (OUT / "species-library.json").write_text(
        json.dumps(lib, indent=1, sort_keys=False, ensure_ascii=True) + "\n", encoding="utf-8"
    )
    ele = {
        "source": f"chemicals {VERS['chemicals']} chemicals.elements.periodic_table (standard atomic weights "
        "as carried by the package)",
        "elements": {s: els[s] for s in sorted(els)},
    }
    (OUT / "elements.json").write_text(
        json.dumps(ele, indent=1, ensure_ascii=True) + "\n", encoding="utf-8"
    )
    hz, nh = build_hazards(species)
    (OUT / "hazard-flags.csv").write_text(hz, encoding="utf-8")
    sg = {
        "note": "dHf(298.15) from every source that gives one, J/mol; 'janaf-4 <index>' = NIST-JANAF table "
        "(janaf package), 'janaf-1998-tsv' = chemicals JANAF_1998.tsv by CAS",
        "one_bar_check": one_bar,
        "janaf_index": dict(sorted(jmatch.items())),
        "species": dict(sorted(gaps.items())),
        "unmapped": sorted(unmapped),
    }
    (OUT / "source-gaps.json").write_text(
        json.dumps(sg, indent=1, ensure_ascii=True) + "\n", encoding="utf-8"
    )
    _summary(species, gaps, nh, jmatch, one_bar, unmapped)


def _summary(species, gaps, nh, jmatch, one_bar, unmapped):
    from collections import Counter

    print("species:", len(species), dict(Counter(e["phase"] for e in species)))
    print("dHf source:", dict(Counter(e["dHf_298"]["source"] for e in species)))
    print("S source:", dict(Counter(e["S_298"]["source"] for e in species)))
    print("cp source:", dict(Counter((e["cp"]["source"], e["cp"]["model"]) for e in species)))
    print(
        "ions:",
        sum(1 for e in species if e["charge"]),
        "with CAS:",
        sum(1 for e in species if e["cas"]),
        "named:",
        sum(1 for e in species if e["names"]),
        "ref states:",
        sum(1 for e in species if e["reference_state_of"]),
    )
    print("hazard rows:", nh, "gaps:", len(gaps), "janaf matches:", len(jmatch))
    print("one bar:", json.dumps(one_bar))
    print("unmapped:", len(unmapped))


if __name__ == "__main__":
    main()
