"""From a SMILES string to Benson groups, corrections and ring corrections (needs RDKit).

Each heavy atom is a group centre typed by its bonding: ``C`` (four single bonds), ``C[d]``
(one C=C), ``C[t]`` (C≡C), ``CO`` (carbonyl carbon; its oxygen belongs to it), ``C[B]`` (a
carbon of a benzene ring), ``C[BF]`` (a carbon shared by two benzene rings), ``O`` (two single
bonds). A group is its centre with the types of its neighbours (hydrogens counted), e.g.
``C(C)(O)(H)2``. The ring neighbours of a ``C[B]`` centre are written ``C[B]`` whatever their
own type, as Benson writes C_B–(X) groups by their one substituent.

Everything the group set cannot describe is collected as a reason, never skipped: other
elements, charges, radicals, several molecules, cumulated double bonds, non-benzenoid rings
without a ring correction, fused or bridged non-aromatic ring systems, a double bond whose
cis/trans form matters but is not given.
"""

from __future__ import annotations

from collections import Counter
from dataclasses import dataclass, field
from typing import Any

from ..errors import InvalidInput, NotEstimable

__all__: list[str] = []

METHOD = "Benson group additivity"
#: Longest SMILES read: the molecules the group set is calibrated on are written in under 80
#: characters; the bound keeps the parser's and the symmetry search's work small.
MAX_SMILES_CHARS = 400
#: Heavy atoms: group additivity is calibrated on molecules of up to about 20 heavy atoms; 60
#: bounds the automorphism search of the symmetry number.
MAX_HEAVY_ATOMS = 60
_METALS_HINT = "metal-containing and inorganic species are outside gas-phase group additivity"
_ALLOWED = {1, 6, 8}
_NON_METALS = {"B", "N", "F", "Si", "P", "S", "Cl", "As", "Se", "Br", "Te", "I", "At"}
_NON_METALS |= {"He", "Ne", "Ar", "Kr", "Xe", "Rn", "*"}


@dataclass
class Typing:
    """What the structure is made of, in the group set's terms."""

    mol: Any
    smiles: str
    groups: Counter[str] = field(default_factory=Counter)
    remapped: dict[str, str] = field(default_factory=dict)
    corrections: Counter[str] = field(default_factory=Counter)
    rings: Counter[str] = field(default_factory=Counter)
    unassigned_stereocentres: int = 0
    reasons: list[str] = field(default_factory=list)
    missing: list[str] = field(default_factory=list)


def rdkit() -> Any:
    """The RDKit modules, or a refusal naming the extra to install."""
    try:
        from rdkit import Chem, RDLogger
    except ImportError:
        raise InvalidInput(
            "structure",
            "estimate_gas",
            "readable with RDKit, which is not installed; install the estimate extra: "
            "pip install 'feasibly[estimate]'",
            "a SMILES string",
        ) from None
    RDLogger.DisableLog("rdApp.*")  # type: ignore[attr-defined]  # our error reports it, once
    return Chem


def parse(smiles: str) -> Any:
    """The molecule with explicit hydrogens, or InvalidInput for text RDKit cannot read."""
    Chem = rdkit()
    if not isinstance(smiles, str) or not smiles.strip():
        raise InvalidInput("smiles", "estimate_gas", "a SMILES string, e.g. 'CCO'", smiles)
    if len(smiles) > MAX_SMILES_CHARS:
        raise InvalidInput(
            "smiles", "estimate_gas", f"at most {MAX_SMILES_CHARS} characters", smiles
        )
    mol = Chem.MolFromSmiles(smiles.strip())
    if mol is None:
        raise InvalidInput(
            "smiles", "estimate_gas", "a SMILES string RDKit can read, e.g. 'CC(C)O'", smiles
        )
    return Chem.AddHs(mol)


def _domain(mol: Any, Chem: Any) -> list[str]:
    """Reasons the molecule is outside the group set whatever its groups."""
    reasons = []
    if len(Chem.GetMolFrags(mol)) > 1:
        reasons.append("it is more than one molecule (a '.' in the SMILES); estimate each alone")
    heavy = [a for a in mol.GetAtoms() if a.GetAtomicNum() > 1]
    if len(heavy) > MAX_HEAVY_ATOMS:
        reasons.append(f"it has {len(heavy)} heavy atoms, more than {MAX_HEAVY_ATOMS}")
    others = sorted({a.GetSymbol() for a in mol.GetAtoms() if a.GetAtomicNum() not in _ALLOWED})
    if others:
        text = f"it contains {', '.join(others)}; the shipped group set covers C, H and O only"
        if any(s not in _NON_METALS for s in others):
            text += f" ({_METALS_HINT})"
        reasons.append(text)
    if any(a.GetFormalCharge() for a in mol.GetAtoms()):
        reasons.append("it carries a charge; the groups are for neutral molecules")
    if any(a.GetNumRadicalElectrons() for a in mol.GetAtoms()):
        reasons.append("it is a radical; the shipped groups are for closed-shell molecules")
    if any(a.GetIsotope() for a in mol.GetAtoms()):
        reasons.append("it has isotope labels; the groups are for natural isotopic composition")
    if not heavy:
        reasons.append("it has no heavy atom to centre a group on")
    return reasons


def _benzenoid(mol: Any) -> tuple[set[int], Counter[int], list[set[int]]]:
    """Atoms of six-membered aromatic all-carbon rings, how many such rings each is in, and all
    rings as atom sets."""
    rings = [set(r) for r in mol.GetRingInfo().AtomRings()]
    benz: Counter[int] = Counter()
    for r in rings:
        atoms = [mol.GetAtomWithIdx(i) for i in r]
        if len(r) == 6 and all(a.GetIsAromatic() and a.GetAtomicNum() == 6 for a in atoms):
            for i in r:
                benz[i] += 1
    return set(benz), benz, rings


def _centre_type(atom: Any, kek: Any, benz: set[int], benz_count: Counter[int]) -> str | None:
    """The group-centre type of a heavy atom (None for a carbonyl oxygen; '?' when untyped)."""
    i = atom.GetIdx()
    if atom.GetAtomicNum() == 6:
        if i in benz:
            return "C[BF]" if benz_count[i] > 1 else "C[B]"
        bonds = [
            (b.GetBondTypeAsDouble(), b.GetOtherAtom(kek.GetAtomWithIdx(i)))
            for b in kek.GetAtomWithIdx(i).GetBonds()
        ]
        doubles = [o for order, o in bonds if order == 2]
        triples = [o for order, o in bonds if order == 3]
        if len(doubles) > 1 or (doubles and triples):
            return "cumulene"
        if triples:
            return "C[t]" if triples[0].GetAtomicNum() == 6 else "?"
        if doubles:
            other = doubles[0].GetAtomicNum()
            return {6: "C[d]", 8: "CO"}.get(other, "?")
        return "C"
    if atom.GetAtomicNum() == 8:
        ka = kek.GetAtomWithIdx(i)
        orders = [b.GetBondTypeAsDouble() for b in ka.GetBonds()]
        if orders == [2.0]:
            return None  # carbonyl oxygen: part of its CO centre
        if all(o == 1.0 for o in orders):
            return "O"
        return "?"
    return "?"


def _ring_skeleton(Chem: Any, kek: Any, atoms: set[int]) -> str:
    """Canonical SMILES of a ring's atoms and bonds (Kekulé), with exocyclic double bonds."""
    frag = Chem.RWMol()
    index = {}
    for i in sorted(atoms):
        index[i] = frag.AddAtom(Chem.Atom(kek.GetAtomWithIdx(i).GetAtomicNum()))
    for b in kek.GetBonds():
        a, c = b.GetBeginAtomIdx(), b.GetEndAtomIdx()
        if a in atoms and c in atoms:
            frag.AddBond(index[a], index[c], b.GetBondType())
        elif b.GetBondTypeAsDouble() == 2 and (a in atoms) != (c in atoms):
            # An exocyclic double bond stays in the skeleton (C=O of a ring ketone matches its
            # correction; a ring with an exocyclic C=C then matches none and is refused).
            inner, outer = (a, c) if a in atoms else (c, a)
            o = frag.AddAtom(Chem.Atom(kek.GetAtomWithIdx(outer).GetAtomicNum()))
            frag.AddBond(index[inner], o, b.GetBondType())
    m = frag.GetMol()
    m.UpdatePropertyCache(strict=False)
    return str(Chem.MolToSmiles(m, kekuleSmiles=True))


def skeleton_of(smiles: str) -> str:
    """The canonical ring skeleton of a ring correction's SMILES (used to match rings)."""
    Chem = rdkit()
    mol = Chem.MolFromSmiles(smiles)
    Chem.Kekulize(mol, clearAromaticFlags=True)
    ring = set(mol.GetRingInfo().AtomRings()[0])
    return _ring_skeleton(Chem, mol, ring)


_SKELETONS: dict[int, dict[str, str]] = {}


def ring_skeletons(data: dict[str, Any]) -> dict[str, str]:
    """Ring skeleton → ring-correction name for the group set ``data`` (computed once)."""
    key = id(data)
    if key not in _SKELETONS:
        _SKELETONS[key] = {
            skeleton_of(r["skeleton_smiles"]): name for name, r in data["rings"].items()
        }
    return _SKELETONS[key]


def _gauche(mol: Any, types: dict[int, str | None]) -> int:
    """Alkane gauche interactions (Benson 1976): per C–C bond of two open-chain sp3 carbons with
    a and b further carbon neighbours, 0/1/2/2/4/6 for (1,1)/(1,2)/(1,3)/(2,2)/(2,3)/(3,3)."""
    table = {(1, 2): 1, (1, 3): 2, (2, 2): 2, (2, 3): 4, (3, 3): 6}
    total = 0
    for b in mol.GetBonds():
        x, y = b.GetBeginAtom(), b.GetEndAtom()
        if b.GetBondTypeAsDouble() != 1 or types.get(x.GetIdx()) != "C":
            continue
        if types.get(y.GetIdx()) != "C" or x.IsInRing() or y.IsInRing():
            continue
        a = sum(1 for n in x.GetNeighbors() if n.GetAtomicNum() == 6) - 1
        c = sum(1 for n in y.GetNeighbors() if n.GetAtomicNum() == 6) - 1
        total += table.get((min(a, c), max(a, c)), 0)
    return total


def _cis(Chem: Any, mol: Any, kek: Any, typing: Typing) -> None:
    """Cis corrections of open-chain C=C bonds, refusing a bond whose form is not given."""
    for b in kek.GetBonds():
        if b.GetBondTypeAsDouble() != 2 or b.IsInRing():
            continue
        x, y = b.GetBeginAtom(), b.GetEndAtom()
        if x.GetAtomicNum() != 6 or y.GetAtomicNum() != 6:
            continue
        subs = [
            [n for n in end.GetNeighbors() if n.GetIdx() != other.GetIdx() and n.GetAtomicNum() > 1]
            for end, other in ((x, y), (y, x))
        ]
        nx, ny = len(subs[0]), len(subs[1])
        if nx == 0 or ny == 0:
            continue
        if nx == 2 or ny == 2:
            typing.corrections["Cis"] += 1 if nx * ny == 2 else 2
            continue
        stereo = mol.GetBondWithIdx(b.GetIdx()).GetStereo()
        if stereo in (Chem.BondStereo.STEREOZ, Chem.BondStereo.STEREOCIS):
            typing.corrections["Cis"] += 1
        elif stereo not in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOTRANS):
            typing.reasons.append(
                "a C=C double bond has cis and trans forms with different ΔfH°, and the SMILES "
                "does not say which (write it with / and \\, e.g. C/C=C/C for trans)"
            )


def type_structure(smiles: str, data: dict[str, Any]) -> Typing:
    """Groups, corrections and rings of a SMILES string; reasons when outside the group set."""
    Chem = rdkit()
    mol = parse(smiles)
    Chem.AssignStereochemistry(mol, cleanIt=True, force=True)
    canonical = str(Chem.MolToSmiles(Chem.RemoveHs(mol)))
    # Work on the molecule re-read from its canonical SMILES: the atom order (and with it the
    # conformers the symmetry number is taken from) then does not depend on how it was written.
    again = Chem.MolFromSmiles(canonical)
    if again is not None:
        mol = Chem.AddHs(again)
        Chem.AssignStereochemistry(mol, cleanIt=True, force=True)
    typing = Typing(mol=mol, smiles=canonical)
    typing.reasons += _domain(mol, Chem)
    if typing.reasons:
        return typing
    kek = Chem.Mol(mol)
    Chem.Kekulize(kek, clearAromaticFlags=True)
    benz, benz_count, rings = _benzenoid(mol)
    types = {
        a.GetIdx(): _centre_type(a, kek, benz, benz_count)
        for a in mol.GetAtoms()
        if a.GetAtomicNum() > 1
    }
    if "cumulene" in types.values():
        typing.reasons.append(
            "it has cumulated double bonds (an allene, ketene or similar); the group set has no "
            "values checked for cumulenes"
        )
    if "?" in types.values():
        typing.reasons.append("it has a bond pattern the group set has no centre type for")
    # Rings: benzene rings need no correction; every other ring needs its own, and only
    # isolated rings (sharing no atom with another ring) are covered.
    by_skeleton = ring_skeletons(data)
    other_rings = [r for r in rings if not (len(r) == 6 and r <= benz)]
    for r in other_rings:
        if any(r & s for s in rings if s is not r):
            typing.reasons.append(
                "it has a fused, bridged or spiro ring system other than fused benzene rings; "
                "the group set has no corrections for those"
            )
            break
        name = by_skeleton.get(_ring_skeleton(Chem, kek, r))
        if name is None:
            typing.reasons.append(
                f"its {len(r)}-membered ring has no ring (strain) correction in the group set"
            )
            typing.missing.append(f"ring correction for {_ring_skeleton(Chem, kek, r)}")
        else:
            typing.rings[name] += 1
    if typing.reasons:
        return typing
    crowded = _crowding(Chem, mol, types)
    if crowded:
        typing.reasons.append(
            f"it is sterically crowded ({crowded}); the group set has no corrections for those "
            "non-nearest-neighbour interactions, which reach tens of kJ/mol"
        )
        return typing
    for atom in mol.GetAtoms():
        centre = types.get(atom.GetIdx())
        if centre is None:
            continue
        neighbours: Counter[str] = Counter()
        for n in atom.GetNeighbors():
            j = n.GetIdx()
            if n.GetAtomicNum() == 1:
                neighbours["H"] += 1
                continue
            kind = types.get(j)
            if kind is None:  # the carbonyl oxygen of this CO centre
                continue
            ring_bond = _shares_ring(atom.GetIdx(), j, rings)
            if centre in ("C[B]", "C[BF]") and j in benz and ring_bond:
                neighbours[kind if centre == "C[BF]" else "C[B]"] += 1
                continue
            neighbours[kind] += 1
        key = _key(centre, neighbours)
        if key not in data["groups"] and key in data["remaps"]:
            typing.remapped[key] = data["remaps"][key]
            key = data["remaps"][key]
        typing.groups[key] += 1
    typing.missing += sorted(k for k in typing.groups if k not in data["groups"])
    if typing.missing:
        typing.reasons.append("the group set has no value for " + ", ".join(typing.missing))
        return typing
    gauche = _gauche(mol, types)
    if gauche:
        typing.corrections["AlkaneGauche"] += gauche
    _cis(Chem, mol, kek, typing)
    typing.corrections["Ortho"] += _ortho(mol, benz, rings)
    typing.corrections = +typing.corrections  # drop zero counts
    centres = Chem.FindMolChiralCenters(mol, includeUnassigned=True, useLegacyImplementation=False)
    typing.unassigned_stereocentres = sum(1 for _, tag in centres if tag == "?")
    return typing


def _crowding(Chem: Any, mol: Any, types: dict[int, str | None]) -> str:
    """Why a structure is too crowded for nearest-neighbour groups ('' when it is not): two
    quaternary carbons within three bonds, or a quaternary carbon on a ring or double-bond atom
    whose neighbour along the ring or double bond carries a substituent as well."""
    quaternary = [
        a.GetIdx()
        for a in mol.GetAtoms()
        if types.get(a.GetIdx()) == "C"
        and sum(1 for n in a.GetNeighbors() if n.GetAtomicNum() > 1) == 4
    ]
    if len(quaternary) > 1:
        dist = Chem.GetDistanceMatrix(mol)
        for n, i in enumerate(quaternary):
            if any(dist[i][j] <= 3 for j in quaternary[n + 1 :]):
                return "two quaternary carbons within three bonds"
    for i in quaternary:
        for a in mol.GetAtomWithIdx(i).GetNeighbors():
            if types.get(a.GetIdx()) not in ("C[B]", "C[d]"):
                continue
            for b in a.GetNeighbors():
                if b.GetIdx() == i or b.GetAtomicNum() == 1:
                    continue
                along = mol.GetBondBetweenAtoms(a.GetIdx(), b.GetIdx())
                if not (along.GetIsAromatic() or along.GetBondTypeAsDouble() == 2):
                    continue
                if any(
                    c.GetAtomicNum() > 1
                    and c.GetIdx() != a.GetIdx()
                    and not (mol.GetBondBetweenAtoms(b.GetIdx(), c.GetIdx()).GetIsAromatic())
                    and mol.GetBondBetweenAtoms(b.GetIdx(), c.GetIdx()).GetBondTypeAsDouble() == 1
                    and not _in_same_ring(mol, b.GetIdx(), c.GetIdx())
                    for c in b.GetNeighbors()
                ):
                    return "a tert-alkyl group next to another substituent on a ring or C=C"
    return ""


def _in_same_ring(mol: Any, i: int, j: int) -> bool:
    return any(i in r and j in r for r in mol.GetRingInfo().AtomRings())


def _shares_ring(i: int, j: int, rings: list[set[int]]) -> bool:
    return any(i in r and j in r for r in rings)


def _ortho(mol: Any, benz: set[int], rings: list[set[int]]) -> int:
    """Pairs of adjacent benzene-ring carbons that both carry a non-hydrogen substituent."""

    def substituted(i: int) -> bool:
        atom = mol.GetAtomWithIdx(i)
        return any(
            n.GetAtomicNum() > 1 and not _shares_ring(i, n.GetIdx(), rings)
            for n in atom.GetNeighbors()
        )

    count = 0
    for b in mol.GetBonds():
        i, j = b.GetBeginAtomIdx(), b.GetEndAtomIdx()
        if i in benz and j in benz and _shares_ring(i, j, rings):
            if substituted(i) and substituted(j):
                count += 1
    return count


def _key(centre: str, neighbours: Counter[str]) -> str:
    order = sorted(neighbours, key=lambda a: (a == "H", a))
    return centre + "".join(
        f"({a})" + (str(neighbours[a]) if neighbours[a] > 1 else "") for a in order
    )


def refuse(typing: Typing) -> NotEstimable:
    """The refusal for a typing with reasons."""
    return NotEstimable(typing.smiles, METHOD, typing.reasons, typing.missing)
