#!/usr/bin/env python3
"""The outside reference for offline screening speed: RDKit doing less than ringsieve's fast tier.

Usage: /usr/bin/python3 testdata/load/rdkit_reference_screen.py FILE.smi
For every SMILES line: parse and sanitize (ring perception, aromaticity, valence), the molecular
formula, the ring count and the smallest ring size at each double bond, and four substructure
counts (ring C=C, ester, amine, carboxylic acid). One process, one core. Prints the count and
the CPU time. ringsieve's fast tier does all of this and the thermodynamics, rules and ranking.
"""
import sys
import time

from rdkit import Chem, RDLogger
from rdkit.Chem import rdMolDescriptors

RDLogger.DisableLog("rdApp.*")

PATTERNS = [Chem.MolFromSmarts(s) for s in ("[C;R]=[C;R]", "C(=O)O[#6]", "[NX3;!$(N-C=O)]", "C(=O)[OH]")]


def main():
    t0 = time.process_time()
    n = ok = 0
    total = 0
    with open(sys.argv[1]) as f:
        for line in f:
            if line.startswith("#") or not line.strip():
                continue
            n += 1
            m = Chem.MolFromSmiles(line.split()[0])
            if m is None:
                continue
            ok += 1
            rdMolDescriptors.CalcMolFormula(m)
            ri = m.GetRingInfo()
            total += ri.NumRings()
            for b in m.GetBonds():
                if b.GetBondType() == Chem.BondType.DOUBLE and b.IsInRing():
                    for size in range(3, 40):
                        if ri.IsBondInRingOfSize(b.GetIdx(), size):
                            break
            for p in PATTERNS:
                total += len(m.GetSubstructMatches(p))
    dt = time.process_time() - t0
    print(f"{n} lines, {ok} parsed, {dt:.2f} CPU-s, {n / dt:.0f} structures/s", file=sys.stderr)


if __name__ == "__main__":
    main()
