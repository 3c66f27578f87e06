"""NASA Glenn's ``thermo.inp`` (McBride, Zehe & Gordon, NASA TP-2002-211556): fetching and reading.

The file ships in the source distribution of the PyPI package ``cea`` (Apache-2.0; its NOTICE.txt
names ``data/thermo.inp`` and NASA TP-2002-211556 as its source). The build downloads that sdist
once into a cache directory outside the repository (``FEASIBLY_DATA_CACHE``, default
``~/.cache/feasibly-data-build``), checks its SHA-256 against the pinned value, and reads
``thermo.inp``, ``LICENSE.txt`` and ``NOTICE.txt`` from the archive in memory; nothing is
extracted and neither file is committed.

Record layout (NASA TP-2002-211556, appendix A): line 1 the species name (columns 1–18) and a
comment (references); line 2 the number of intervals, a reference-date code, five element/amount
pairs, a phase flag (0 gas, otherwise condensed), the molecular weight and ΔfH°(298.15 K) in J/mol;
then per interval one line with the range, the number of coefficients and the exponents of T
(always −2 … 4 here), and two lines with a1…a7 and b1, b2 (Fortran ``D`` exponents).
"""

from __future__ import annotations

import hashlib
import os
import subprocess
import sys
import tarfile
from dataclasses import dataclass, field
from pathlib import Path

from .errors import SourceError, need

#: The pinned sdist: version and the SHA-256 of ``cea-3.3.4.tar.gz`` as downloaded from PyPI.
CEA_VERSION = "3.3.4"
CEA_SDIST = f"cea-{CEA_VERSION}.tar.gz"
CEA_SHA256 = "6e744f3eb82b56f6034c2a571c0f5ec886622ebff3d8bad630ad0fd523be057f"
MEMBER = f"cea-{CEA_VERSION}/data/thermo.inp"
NOTICE = f"cea-{CEA_VERSION}/NOTICE.txt"
LICENSE = f"cea-{CEA_VERSION}/LICENSE.txt"
#: The NASA-9 exponents of T in every interval of the file.
EXPONENTS = (-2.0, -1.0, 0.0, 1.0, 2.0, 3.0, 4.0)
# The file holds some 2,000 records; far fewer means the layout was not understood.
MIN_RECORDS = 1500


@dataclass
class Record:
    """One species (or one phase of a condensed species) of thermo.inp."""

    name: str
    comment: str
    date_code: str
    elements: dict[str, float]
    condensed: bool
    molwt: float
    dhf_298: float
    reactant_section: bool
    breaks: list[float] = field(default_factory=list)
    #: per interval: a1..a7, b1, b2
    coeffs: list[list[float]] = field(default_factory=list)
    #: repairs the reader made (written to the entry's notes)
    repairs: list[str] = field(default_factory=list)


def cache_dir() -> Path:
    """Where the sdist is kept between builds (never inside the repository)."""
    env = os.environ.get("FEASIBLY_DATA_CACHE")
    return Path(env) if env else Path.home() / ".cache" / "feasibly-data-build"


def _sha256(path: Path) -> str:
    return hashlib.sha256(path.read_bytes()).hexdigest()


def sdist_path() -> Path:
    """The pinned ``cea`` sdist, downloaded with pip when not cached; its SHA-256 checked."""
    d = cache_dir()
    p = d / CEA_SDIST
    if not p.is_file():
        d.mkdir(parents=True, exist_ok=True)
        # --no-build-isolation: pip prepares the sdist's metadata with the build venv's
        # scikit-build-core instead of building numpy etc. from source in an isolated env.
        cmd = [
            sys.executable, "-m", "pip", "download", "--no-deps", "--no-binary", ":all:",
            "--no-build-isolation", f"cea=={CEA_VERSION}", "-d", str(d),
        ]  # fmt: skip
        run = subprocess.run(cmd, capture_output=True, text=True, check=False)
        need(
            run.returncode == 0 and p.is_file(),
            f"could not download {CEA_SDIST} with pip (needs PyPI and scikit-build-core in the "
            f"build environment): {run.stderr[-800:]}",
        )
    got = _sha256(p)
    need(got == CEA_SHA256, f"{p}: sha256 {got} is not the pinned {CEA_SHA256}")
    return p


def _member(tar: tarfile.TarFile, name: str) -> str:
    f = tar.extractfile(name)
    need(f is not None, f"{CEA_SDIST}: {name} missing")
    assert f is not None
    return f.read().decode("utf-8")


def read_sdist() -> tuple[str, str, str]:
    """``thermo.inp``, ``NOTICE.txt`` and ``LICENSE.txt`` of the pinned sdist (checked terms)."""
    with tarfile.open(sdist_path(), "r:gz") as tar:
        text, notice, lic = (_member(tar, n) for n in (MEMBER, NOTICE, LICENSE))
    need("Apache License" in lic and "Version 2.0" in lic, f"{LICENSE}: not Apache-2.0")
    need(
        "data/thermo.inp" in notice and "TP-2002-211556" in notice,
        f"{NOTICE}: no longer names data/thermo.inp and NASA TP-2002-211556",
    )
    return text, notice, lic


def _num(s: str) -> float:
    return float(s.replace("D", "E").replace("d", "e"))


def _coeff_fields(line: str, n: int) -> list[str]:
    return [line[16 * i : 16 * (i + 1)] for i in range(n)]


def parse(text: str) -> list[Record]:
    """Every record of thermo.inp, in file order (gases, condensed, then the reactant section)."""
    lines = text.splitlines()
    need("thermo" in [ln.strip() for ln in lines[:200]], "thermo.inp: no 'thermo' line")
    i = [ln.strip() for ln in lines].index("thermo") + 2  # skip the global T-range line
    out: list[Record] = []
    reactants = False
    while i < len(lines):
        ln = lines[i]
        if not ln.strip() or ln.startswith("!"):
            i += 1
            continue
        if ln.startswith("END PRODUCTS"):
            reactants = True
            i += 1
            continue
        if ln.startswith("END REACTANTS"):
            break
        name, comment = ln[:18].strip(), ln[18:].strip()
        l2 = lines[i + 1]
        try:
            nint = int(l2[0:2])
            date_code = l2[3:9].strip()
            elements: dict[str, float] = {}
            for k in range(5):
                sym = l2[10 + 8 * k : 12 + 8 * k].strip()
                amt = float(l2[12 + 8 * k : 18 + 8 * k])
                if sym and amt != 0.0:
                    elements[sym] = elements.get(sym, 0.0) + amt
            condensed = int(l2[50:52]) != 0
            molwt = float(l2[52:65])
            dhf = float(l2[65:80])
        except ValueError as exc:
            raise SourceError(f"thermo.inp line {i + 2} ({name}): {exc}") from None
        rec = Record(name, comment, date_code, elements, condensed, molwt, dhf, reactants)
        i += 2
        if nint == 0:
            i += 1  # one line: the single temperature of an enthalpy-only reactant
        for _ in range(nint):
            h = lines[i]
            t_lo, t_hi = float(h[0:11]), float(h[11:22])
            ncoef = int(h[22])
            exps = tuple(float(h[23 + 5 * k : 28 + 5 * k]) for k in range(8))
            need(
                ncoef == 7 and exps[:7] == EXPONENTS,
                f"thermo.inp {name}: interval {t_lo}-{t_hi} is not NASA-9 (exponents {exps})",
            )
            c1 = [_num(x) for x in _coeff_fields(lines[i + 1], 5)]
            f2 = _coeff_fields(lines[i + 2], 5)
            c2 = [_num(f2[0]), _num(f2[1]), _num(f2[3]), _num(f2[4])]
            if t_hi <= t_lo:
                # The 2021 update reset lower limits to 300 K ("many arbitrarily set to 200K, but
                # data is only fit to 300K", file header); applied to a first interval that ended
                # at or below 300 K it left an empty or inverted interval. Such an interval covers
                # only T below the new limit and is dropped.
                rec.repairs.append(
                    f"thermo.inp interval {t_lo:g}-{t_hi:g} K is empty or inverted (2021 reset "
                    "of lower limits to 300 K); dropped, the record starts at the next interval"
                )
                i += 3
                continue
            if not rec.breaks:
                rec.breaks.append(t_lo)
            need(
                abs(rec.breaks[-1] - t_lo) < 1e-6 or (len(rec.breaks) == 1),
                f"thermo.inp {name}: intervals not contiguous",
            )
            rec.breaks.append(t_hi)
            rec.coeffs.append(c1 + c2)
            i += 3
        if nint and not rec.coeffs:
            rec.repairs.append("every interval empty or inverted: record has no usable range")
        out.append(rec)
    need(len(out) >= MIN_RECORDS, f"thermo.inp: only {len(out)} records read")
    return merge_repeated(out)


def merge_repeated(recs: list[Record]) -> list[Record]:
    """A condensed phase given as consecutive records of one name (e.g. magnetite below and
    above its Curie point) becomes one record with the intervals joined (they must touch)."""
    out: list[Record] = []
    for r in recs:
        prev = out[-1] if out else None
        if prev is not None and prev.name == r.name and prev.coeffs and r.coeffs:
            need(
                abs(prev.breaks[-1] - r.breaks[0]) < 1e-6,
                f"thermo.inp {r.name}: repeated record does not continue the previous range",
            )
            need(
                abs(prev.dhf_298 - r.dhf_298) < 1e-6 and prev.elements == r.elements,
                f"thermo.inp {r.name}: repeated record with another ΔfH° or composition",
            )
            prev.breaks += r.breaks[1:]
            prev.coeffs += r.coeffs
            prev.comment = f"{prev.comment} | {r.comment}"
            prev.repairs += r.repairs
            continue
        out.append(r)
    return out


def load_thermo_inp() -> list[Record]:
    """The parsed records of the pinned thermo.inp."""
    text, _, _ = read_sdist()
    return parse(text)
