"""The rotational symmetry number σ = σ_external × σ_internal of a molecule (needs RDKit).

σ_internal is 3 for every methyl group on a heavy atom. σ_external counts the permutations of
the atoms (methyl hydrogens left out, so a methyl's own turn is not counted twice) that a
proper rotation of a 3D conformer maps onto itself: the graph automorphisms are enumerated
by RDKit's substructure match of the molecule onto itself, and each is accepted when the
Kabsch fit of the permuted onto the original coordinates has determinant +1 and an RMSD
under 0.05 Å. Several force-field conformers are tried and the highest count kept (the
symmetric conformer, as tabulated symmetry numbers assume). A tert-butyl-like top on a
non-symmetric frame is not counted (a limitation the S° calibration sees).
"""

from __future__ import annotations

from typing import Any

import numpy as np

__all__: list[str] = []

#: Conformers tried: enough to reach the all-anti chain or the chair of the small molecules the
#: group set covers; the count is the maximum over them.
_CONFORMERS = 10
#: RMSD (Å) under which a permuted conformer is the same geometry: force-field minima agree to
#: about 1e-3 Å; a genuinely different arrangement differs by tenths of an Å or more.
_RMSD_TOL = 0.05
#: Graph automorphisms examined: a molecule of the covered size has at most a few hundred.
_MAX_MATCHES = 20000


def methyl_carbons(mol: Any) -> list[int]:
    """Carbons with three hydrogens and one heavy neighbour."""
    out = []
    for a in mol.GetAtoms():
        if a.GetAtomicNum() != 6:
            continue
        hs = [n for n in a.GetNeighbors() if n.GetAtomicNum() == 1]
        heavy = [n for n in a.GetNeighbors() if n.GetAtomicNum() > 1]
        if len(hs) == 3 and len(heavy) == 1:
            out.append(a.GetIdx())
    return out


def symmetry_number(mol: Any) -> tuple[int, int, int] | None:
    """(σ, σ_external, number of methyl rotors) of a molecule with explicit hydrogens; None
    when no 3D conformer can be built."""
    from rdkit import Chem
    from rdkit.Chem import rdDistGeom, rdForceFieldHelpers

    methyls = methyl_carbons(mol)
    drop = sorted(
        (
            n.GetIdx()
            for i in methyls
            for n in mol.GetAtomWithIdx(i).GetNeighbors()
            if n.GetAtomicNum() == 1
        ),
        reverse=True,
    )
    work = Chem.Mol(mol)
    ids = list(rdDistGeom.EmbedMultipleConfs(work, numConfs=_CONFORMERS, randomSeed=20261202))
    if not ids:  # no 3D structure: the caller refuses rather than guess σ
        return None
    rdForceFieldHelpers.MMFFOptimizeMoleculeConfs(work, maxIters=2000)
    reduced = Chem.RWMol(work)
    for i in drop:
        reduced.RemoveAtom(i)
    red = reduced.GetMol()
    red.UpdatePropertyCache(strict=False)
    query = Chem.Mol(red)
    matches = red.GetSubstructMatches(
        query, uniquify=False, useChirality=False, maxMatches=_MAX_MATCHES
    )
    best = 1
    for conf in red.GetConformers():
        xyz = np.array(conf.GetPositions())
        xyz = xyz - xyz.mean(axis=0)
        n = 0
        for perm in matches:
            # perm[k] is the atom of red that query atom k maps to
            moved = xyz[list(perm)]
            if _proper(xyz, moved):
                n += 1
        best = max(best, n)
    return best * 3 ** len(methyls), best, len(methyls)


def _proper(a: np.ndarray, b: np.ndarray) -> bool:
    """True when a proper rotation maps ``b`` onto ``a`` (both centred) within the tolerance."""
    if len(a) == 1:
        return True
    h = b.T @ a
    u, _, vt = np.linalg.svd(h)
    d = 1.0 if np.linalg.det(vt.T @ u.T) > 0 else -1.0
    r = vt.T @ np.diag([1.0, 1.0, d]) @ u.T
    rmsd = float(np.sqrt(np.mean(np.sum((b @ r.T - a) ** 2, axis=1))))
    return rmsd < _RMSD_TOL
