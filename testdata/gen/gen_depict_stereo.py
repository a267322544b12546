#!/usr/bin/env python3
"""Stereo round trip of ringsieve's 2-D drawings, read by RDKit as an outside reader.

Run from the repository root: /usr/bin/python3 testdata/gen/gen_depict_stereo.py
Needs Go (it runs `go run . depict --format molfile`) and RDKit from Debian (python3-rdkit).

Input: every stereo-bearing SMILES of the benchmark corpus (testdata/corpus/candidates.smi:
tetrahedral '@' marks or '/' '\\' double-bond marks) plus the structures in EXTRA.
For each, ringsieve writes a 2-D molfile with wedge and hash bonds; RDKit reads the molfile
(stereo from the wedges and the 2-D coordinates) and, separately, the SMILES. Every stereo
element of the SMILES -- each tetrahedral centre with its CIP label, each double bond with its
E/Z label -- must come back from the molfile with the same label (extra elements that a drawing
fixes, such as an unmarked ring double bond, are not losses).

Writes testdata/reference/rdkit_depict_stereo.tsv: smiles, centres, double bonds, kept (1/0),
what was lost, and ringsieve's stereo signature of the drawing (depict.StereoSignature). The
Go test reads the file and recomputes the signature: a drawing that changes makes the
reference stale, and this script must be run again.
"""
import subprocess
import sys
import tempfile

from rdkit import Chem, RDLogger, rdBase

RDLogger.DisableLog("rdApp.*")

EXTRA = [
    "CN1C(=O)[C@H]2[C@@H](C1=O)[C@@H]1C=C[C@H]2C1",
    "O=C1OC(=O)[C@@H]2[C@H]1[C@H]1C=C[C@@H]2O1",
    "C1=C[C@@H]2[C@H](C1)[C@@H]1C=C[C@H]2C1",
    "N[C@@H](C)C(=O)OC1CC2C=CC1C2",
    "F/C=C/C1CC2C=CC1C2",
    "C/C=C\\C1CC2C=CC1C2",
    "C1=C/CCCCCC/1",
    "C1=C\\CCCCCC/1",
    "C1=C/C[C@H]2CCC[C@@H]2CC/1",
    "C1=C/CCCCCCCCCC/1",
    "C/C1=C/CCCCCC1",
    "OC[C@H]1C[C@@H]2C=C[C@H]1C2",
    "COC(=O)[C@@H]1[C@H](C(=O)OC)[C@@H]2C=C[C@H]1C2",
]


def elements(mol):
    Chem.AssignStereochemistry(mol, cleanIt=True, force=True)
    centres = {a.GetIdx(): a.GetProp("_CIPCode") for a in mol.GetAtoms() if a.HasProp("_CIPCode")}
    doubles = {}
    for b in mol.GetBonds():
        st = b.GetStereo()
        if st in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOZ):
            doubles[tuple(sorted((b.GetBeginAtomIdx(), b.GetEndAtomIdx())))] = "E" if st == Chem.BondStereo.STEREOE else "Z"
    return centres, doubles


def main():
    smiles = []
    with open("testdata/corpus/candidates.smi") as f:
        for line in f:
            if line.startswith("#") or not line.strip():
                continue
            s = line.split()[0]
            if ("@" in s or "/" in s or "\\" in s) and "[H]" not in s:
                smiles.append(s)
    smiles += EXTRA
    with tempfile.NamedTemporaryFile("w", suffix=".smi", delete=False) as tmp:
        for i, s in enumerate(smiles):
            tmp.write(f"{s} s{i}\n")
        path = tmp.name
    sdf = subprocess.run(["go", "run", ".", "depict", "--format", "molfile", path],
                         check=False, capture_output=True, text=True).stdout
    records = [r for r in sdf.split("$$$$\n") if r.strip()]
    rows = []
    for rec in records:
        block = rec.split("> <smiles>")[0]
        smi = rec.split("> <smiles>\n")[1].split("\n")[0]
        sig = rec.split("> <stereo_signature>\n")[1].split("\n")[0]
        want = Chem.MolFromSmiles(smi)
        got = Chem.MolFromMolBlock(block, sanitize=True, removeHs=False)
        if want is None or got is None or want.GetNumAtoms() != got.GetNumAtoms():
            rows.append((smi, 0, 0, 0, "unreadable", sig))
            continue
        Chem.AssignChiralTypesFromBondDirs(got)
        wc, wd = elements(want)
        gc, gd = elements(got)
        lost = [f"centre {i} {c}->{gc.get(i, '?')}" for i, c in wc.items() if gc.get(i) != c]
        lost += [f"double {a}-{b} {e}->{gd.get((a, b), '?')}" for (a, b), e in wd.items() if gd.get((a, b)) != e]
        rows.append((smi, len(wc), len(wd), 0 if lost else 1, "; ".join(lost), sig))
    with open("testdata/reference/rdkit_depict_stereo.tsv", "w") as out:
        out.write(f"# ringsieve 2-D drawings read back by RDKit {rdBase.rdkitVersion}; written by testdata/gen/gen_depict_stereo.py\n")
        out.write("smiles\tcentres\tdouble_bonds\tkept\tlost\tsignature\n")
        for r in rows:
            out.write("\t".join(str(x) for x in r) + "\n")
    kept = sum(r[3] for r in rows)
    print(f"{len(rows)} structures, {sum(r[1] for r in rows)} centres, {sum(r[2] for r in rows)} double bonds; all kept in {kept}", file=sys.stderr)


if __name__ == "__main__":
    main()
