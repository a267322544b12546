#!/usr/bin/env python3
"""Reference lowest MMFF94 energies of monomer-like structures from RDKit, the outside check of
ringsieve's conformer search (screening/forcefield).

Run from the repository root with the Debian RDKit (apt-get install -y python3-rdkit):

    /usr/bin/python3 testdata/gen/gen_conformers.py

For each of 100 monomer-like structures (ROMP ring skeletons with substituents and stereo, our
own combinations, seeded), RDKit embeds 300 conformers (ETKDG version 3, fixed random seed),
optimizes each with MMFF94 (at most 2000 iterations), and keeps the lowest energy among the
conformers whose stereo (assigned from the 3-D coordinates) still matches the SMILES. Writes
testdata/reference/rdkit_conformers.jsonl: a header line, then one JSON object per structure:
id, smiles, heavy_atoms, min_energy_kcal_mol, embedded (conformers RDKit produced),
stereo_rejected_below (lower-energy conformers dropped because their stereo had changed),
seconds (RDKit's wall time for the embedding and optimization on this machine, for the speed
comparison).
"""
import json
import os
import random
import signal
import time

from rdkit import Chem, RDLogger
from rdkit.Chem import AllChem, rdMolTransforms

RDLogger.DisableLog("rdApp.*")
random.seed(20261203)

ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))
OUT = os.path.join(ROOT, "testdata", "reference", "rdkit_conformers.jsonl")

# ROMP monomer skeletons with one substitution site {R}
SKELETONS = [
    "C1=CC2CC1C({R})C2", "C1=C[C@H]2C[C@@H]1[C@H]({R})C2", "C1=C[C@@H]2C[C@H]1[C@H]({R})C2",
    "C1=C[C@H]2C[C@@H]1[C@@H]({R})[C@H]2{R}", "C1=CC2CC1C({R})(C)C2",
    "C1=C[C@H]2O[C@@H]1[C@H]({R})C2", "C1=C[C@H]2O[C@@H]1[C@@H]({R})[C@H]2{R}",
    "O=C1N({R})C(=O)[C@@H]2[C@H]3C=C[C@H](C3)[C@@H]12", "O=C1N({R})C(=O)[C@@H]2[C@H]3C=C[C@H](O3)[C@@H]12",
    "O=C1N({R})C(=O)[C@H]2[C@H]3C=C[C@H](C3)[C@H]12",
    "C1=CC2C=C({R})C1C2", "C1=CC2CC1C1C2CC({R})C1",
    "C1=CC({R})C1", "C1=CCC({R})C1", "C1=CCCCC({R})C1", "C1=C\\CCCCC({R})C/1",
    "C1=CCCC({R})CCC1", "C1=CCC({R})CC=CC1", "C1=CCCCCCC({R})C1", "C1=C({R})CCCCCC1",
    "C1=CC2CCC2C1{R}", "C1=CCOC({R})OC1", "C1=CCN({R})C1", "C1=CC2CC1c1cc({R})ccc12",
]

# substituents close their own rings with label 9, which no skeleton uses
SUBSTITUENTS = [
    "C", "CC", "CCCC", "C(C)(C)C", "c9ccccc9", "CO", "COC", "C(=O)O", "C(=O)OC", "C(=O)OCC",
    "C(=O)OCCCC", "C#N", "CN(C)C", "CSC", "C(F)(F)F", "Cl", "Br", "C(C)=O", "C(=O)N(C)C",
    "C(=O)NC", "OC(=O)C", "CC(=O)OC", "COCCOC", "CCCCCC", "C(=O)OC(C)(C)C", "CCO", "COC(=O)C",
    "c9ccc(F)cc9", "CCC#N", "COc9ccccc9",
]


# trans-cyclooctenes: RDKit's embedding (2022.09) does not honour a trans double bond in an
# eight-membered ring and spends minutes trying; they have no reference here (ringsieve's own
# tests check that its structures keep the trans geometry)
RDKIT_CANNOT_EMBED = {"C1=C\\CCCCC({R})C/1"}


def fill(skel):
    out = skel
    while "{R}" in out:
        r = random.choice(SUBSTITUENTS)
        out = out.replace("({R})", "(" + r + ")", 1) if "({R})" in out else out.replace("{R}", "(" + r + ")", 1)
    return out


def keeps_stereo(mol, mh, cid):
    """Whether conformer cid of mh (mol with hydrogens) has the stereo the SMILES specifies:
    the CIP label of every specified centre, and the cis/trans relation of the reference atoms of
    every specified double bond (unspecified elements may come out either way)."""
    c = Chem.Mol(mh)
    c.RemoveAllConformers()
    c.AddConformer(Chem.Conformer(mh.GetConformer(cid)), assignId=True)
    Chem.AssignStereochemistryFrom3D(c)
    for a in mol.GetAtoms():
        if a.HasProp("_CIPCode"):
            b = c.GetAtomWithIdx(a.GetIdx())
            if not b.HasProp("_CIPCode") or b.GetProp("_CIPCode") != a.GetProp("_CIPCode"):
                return False
    conf = mh.GetConformer(cid)
    for bd in mol.GetBonds():
        st = bd.GetStereo()
        if st == Chem.BondStereo.STEREONONE or st == Chem.BondStereo.STEREOANY:
            continue
        x, y = list(bd.GetStereoAtoms())
        d = abs(rdMolTransforms.GetDihedralDeg(conf, x, bd.GetBeginAtomIdx(), bd.GetEndAtomIdx(), y))
        trans = st in (Chem.BondStereo.STEREOE, Chem.BondStereo.STEREOTRANS)
        if (d > 90) != trans:
            return False
    return True


def reference(smi):
    mol = Chem.MolFromSmiles(smi)
    Chem.AssignStereochemistry(mol, cleanIt=True, force=True)
    mh = Chem.AddHs(mol)
    t0 = time.time()
    ps = AllChem.ETKDGv3()
    ps.randomSeed = 0xF00D
    ids = list(AllChem.EmbedMultipleConfs(mh, 300, ps))
    res = AllChem.MMFFOptimizeMoleculeConfs(mh, maxIters=2000)
    seconds = time.time() - t0
    # the lowest-energy conformer that keeps the SMILES stereo (checked from the lowest up)
    best, rejected = None, 0
    for cid, e in sorted(((cid, e) for cid, (_, e) in zip(ids, res)), key=lambda p: p[1]):
        if keeps_stereo(mol, mh, cid):
            best = e
            break
        rejected += 1
    return {
        "smiles": smi, "heavy_atoms": mol.GetNumHeavyAtoms(),
        "min_energy_kcal_mol": None if best is None else round(best, 4),
        "embedded": len(ids), "stereo_rejected_below": rejected, "seconds": round(seconds, 3),
    }


class TooSlow(Exception):
    pass


def _alarm(signum, frame):
    raise TooSlow()


# a structure RDKit needs more than this to embed (seconds) is left out of the reference
LIMIT_S = 120


def main():
    signal.signal(signal.SIGALRM, _alarm)
    cache_path = os.environ.get("GEN_CACHE")  # optional: reuse earlier results while iterating
    cache = {}
    if cache_path and os.path.exists(cache_path):
        with open(cache_path) as f:
            cache = json.load(f)
    seen, rows = set(), []
    while len(rows) < 100:
        skel = random.choice(SKELETONS)
        smi = fill(skel)
        if skel in RDKIT_CANNOT_EMBED:
            continue
        m = Chem.MolFromSmiles(smi)
        if m is None or m.GetNumHeavyAtoms() > 26:
            continue
        can = Chem.MolToSmiles(m)
        if can in seen:
            continue
        seen.add(can)
        print("..", smi, flush=True)
        if smi in cache:
            row = cache[smi]
        else:
            signal.alarm(LIMIT_S)
            try:
                row = reference(smi)
            except TooSlow:
                row = {"smiles": smi, "min_energy_kcal_mol": None}
            finally:
                signal.alarm(0)
            cache[smi] = row
            if cache_path:
                with open(cache_path, "w") as f:
                    json.dump(cache, f)
        if row["min_energy_kcal_mol"] is None:
            print("   left out (too slow, or no conformer kept the stereo)", flush=True)
            continue
        row = {"id": "C%03d" % (len(rows) + 1), **row}
        rows.append(row)
        print(row["id"], smi, row["min_energy_kcal_mol"], row["stereo_rejected_below"], row["seconds"], flush=True)
    with open(OUT, "w") as f:
        f.write(json.dumps({"source": "RDKit (Debian python3-rdkit) %s: ETKDGv3 300 conformers, MMFF94 optimization, "
                            "stereo-checked; testdata/gen/gen_conformers.py" % Chem.rdBase.rdkitVersion}) + "\n")
        for r in rows:
            f.write(json.dumps(r) + "\n")


if __name__ == "__main__":
    main()
