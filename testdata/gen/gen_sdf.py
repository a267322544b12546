#!/usr/bin/env python3
"""SD file reference for ringsieve's molfile reader, written by RDKit.

Run from the repository root: /usr/bin/python3 testdata/gen/gen_sdf.py
Takes every 15th structure of testdata/reference/rdkit_reference.jsonl (our own generator) plus
charged and isotopic examples, writes them as V2000 molfiles with RDKit (Kekulé form and with
aromatic bond type 4) into testdata/reference/rdkit_structures.sdf, each with data fields
<ID>, <FORMULA>, <MW> and <EXACT_MASS> computed by RDKit.
"""
import json

from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors, rdMolDescriptors

RDLogger.DisableLog("rdApp.*")


def main():
    smiles = []
    with open("testdata/reference/rdkit_reference.jsonl") as fh:
        next(fh)
        for i, line in enumerate(fh):
            if i % 15 == 0:
                smiles.append(json.loads(line)["smiles"])
    smiles += ["[NH3+]CC1CC2C=CC1C2.[Cl-]", "[2H]C1=CC2CCC1C2", "[O-]C(=O)C1CC2C=CC1C2.[Na+]", "C[N+](C)(C)CC1CC2C=CC1C2.[Br-]",
               "c1ccc2c(c1)C1C=CC2C1", "O=C1N(c2ccncc2)C(=O)C2C3C=CC(C3)C12", "[13CH3]OC(=O)C1CC2C=CC1C2"]
    w = Chem.SDWriter("testdata/reference/rdkit_structures.sdf")
    n = 0
    for k, smi in enumerate(smiles):
        m = Chem.MolFromSmiles(smi)
        if m is None:
            continue
        m.SetProp("_Name", "ref-%04d" % k)
        m.SetProp("ID", "S%04d" % k)
        m.SetProp("FORMULA", rdMolDescriptors.CalcMolFormula(m))
        m.SetProp("MW", "%.5f" % Descriptors.MolWt(m))
        m.SetProp("EXACT_MASS", "%.6f" % Descriptors.ExactMolWt(m))
        m.SetProp("SMILES", smi)
        w.SetKekulize(k % 2 == 0)  # every other record keeps aromatic bonds (type 4)
        w.write(m)
        n += 1
    w.close()
    print("records:", n)


if __name__ == "__main__":
    main()
