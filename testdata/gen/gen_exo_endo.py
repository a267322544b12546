#!/usr/bin/env python3
"""Exo/endo placement of substituents on norbornene-type monomers from RDKit 3D geometry.

Run from the repository root: /usr/bin/python3 testdata/gen/gen_exo_endo.py
Writes testdata/reference/rdkit_exo_endo.jsonl: for each stereo-specified SMILES, "exo", "endo"
or "exo,endo" for the heavy substituents on the two-carbon bridge. A substituent is exo when it
lies on the same side as the one-atom bridge of the plane through the two bridgeheads and the
two saturated bridge carbons (embedded conformer, ETKDG, fixed seed).
"""
import json

import numpy as np
from rdkit import Chem, RDLogger
from rdkit.Chem import AllChem

RDLogger.DisableLog("rdApp.*")

SMILES = [
    "COC[C@@H]1C[C@H]2C=C[C@@H]1C2", "COC[C@@H]1C[C@@H]2C=C[C@H]1C2",
    "CC(=O)O[C@@H]1[C@H](OC(C)=O)[C@H]2C=C[C@@H]1C2", "COC(=O)[C@@H]1[C@H](C(=O)OC)[C@@H]2C=C[C@H]1C2",
    "CN1C(=O)[C@@H]2[C@@H](C1=O)[C@H]1C=C[C@@H]2O1", "O=C1OC(=O)[C@H]2[C@@H]1[C@H]1C=C[C@@H]2C1",
    "C1=C[C@@H]2[C@H](C1)[C@@H]1C=C[C@H]2C1", "C1=C[C@H]2[C@@H](C1)[C@H]1C=C[C@@H]2C1",
    "OC[C@H]1C[C@@H]2C=C[C@H]1C2", "OC[C@H]1C[C@H]2C=C[C@@H]1C2", "N#C[C@@H]1C[C@H]2C=C[C@@H]1C2",
    "N#C[C@H]1C[C@H]2C=C[C@@H]1C2", "CCCCCCCCOC[C@@H]1[C@H](COCCCCCCCC)[C@H]2C=C[C@@H]1O2",
    "O=C(O)[C@@H]1C[C@H]2C=C[C@@H]1C2", "O=C(O)[C@H]1C[C@H]2C=C[C@@H]1C2",
    "C[C@]1(C(=O)OC)C[C@H]2C=C[C@@H]1C2", "C[C@@]1(C(=O)OC)C[C@H]2C=C[C@@H]1C2",
    "O=C1N(c2ccccc2)C(=O)[C@H]2[C@@H]1[C@@H]1C=C[C@H]2C1", "O=C1N(c2ccccc2)C(=O)[C@@H]2[C@H]1[C@@H]1C=C[C@H]2C1",
]


def classify(smi):
    m = Chem.AddHs(Chem.MolFromSmiles(smi))
    if AllChem.EmbedMolecule(m, randomSeed=7) != 0:
        return None
    pos = m.GetConformer().GetPositions()
    ri = m.GetRingInfo()
    # olefin in a five-membered ring of a bridged bicycle
    for b in m.GetBonds():
        if b.GetBondType() != Chem.BondType.DOUBLE or not b.IsInRing():
            continue
        c2, c3 = b.GetBeginAtom(), b.GetEndAtom()
        bh = [n for n in c2.GetNeighbors() if n.GetIdx() != c3.GetIdx() and n.GetAtomicNum() != 1] + \
             [n for n in c3.GetNeighbors() if n.GetIdx() != c2.GetIdx() and n.GetAtomicNum() != 1]
        if len(bh) != 2:
            continue
        b1, b4 = bh
        common = [n.GetIdx() for n in b1.GetNeighbors() if n.GetIdx() in [x.GetIdx() for x in b4.GetNeighbors()] and n.GetAtomicNum() != 1]
        if len(common) != 1:
            continue
        bridge = common[0]
        c6 = [n for n in b1.GetNeighbors() if n.GetIdx() not in (c2.GetIdx(), c3.GetIdx(), bridge) and n.GetAtomicNum() != 1]
        c5 = [n for n in b4.GetNeighbors() if n.GetIdx() not in (c2.GetIdx(), c3.GetIdx(), bridge) and n.GetAtomicNum() != 1]
        if len(c5) != 1 or len(c6) != 1:
            continue
        c5, c6 = c5[0], c6[0]
        centre = (pos[b1.GetIdx()] + pos[b4.GetIdx()] + pos[c5.GetIdx()] + pos[c6.GetIdx()]) / 4
        normal = np.cross(pos[c5.GetIdx()] - pos[b1.GetIdx()], pos[c6.GetIdx()] - pos[b4.GetIdx()])
        side = np.sign(np.dot(pos[bridge] - centre, normal))
        found = set()
        for c in (c5, c6):
            for s in c.GetNeighbors():
                if s.GetAtomicNum() == 1 or s.GetIdx() in (b1.GetIdx(), b4.GetIdx(), c5.GetIdx(), c6.GetIdx()):
                    continue
                found.add("exo" if np.sign(np.dot(pos[s.GetIdx()] - centre, normal)) == side else "endo")
        return ",".join(sorted(found)) if found else ""
    return None


def main():
    with open("testdata/reference/rdkit_exo_endo.jsonl", "w") as fh:
        for smi in SMILES:
            c = classify(smi)
            if c is not None:
                fh.write(json.dumps({"smiles": smi, "exo_endo": c}) + "\n")


if __name__ == "__main__":
    main()
