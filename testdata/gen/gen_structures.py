#!/usr/bin/env python3
"""Generate ringsieve's own test structures and their RDKit reference facts.

Run from the repository root with the Debian RDKit (apt-get install -y python3-rdkit):

    /usr/bin/python3 testdata/gen/gen_structures.py

Writes
  testdata/reference/rdkit_reference.jsonl  one JSON object per structure: smiles, formula, average
      molecular weight, monoisotopic mass, ring count, smallest ring size per bond (keyed by the
      two atom indices, which follow SMILES order in both RDKit and ringsieve), aromatic atom count.
  testdata/corpus/candidates.smi            >= 10,000 candidate monomers for the benchmarks.

The structures come from a combinatorial generator of our own (ring skeletons x substituents x
stereo, salts, charges, isotopes), seeded so the files are reproducible.
"""
import json
import os
import random
import sys

from rdkit import Chem, RDLogger
from rdkit.Chem import Descriptors, rdMolDescriptors

RDLogger.DisableLog("rdApp.*")
random.seed(20261201)

# Ring skeletons with one substitution site written as {R} (and {S} for a second one).
SKELETONS = [
    # norbornenes and relatives
    "C1=CC2CC1C({R})C2", "C1=CC2CC1C({R})C2{S}", "C1=CC2C({R})C1C({S})C2",
    "C1=C[C@H]2C[C@@H]1[C@H]({R})C2", "C1=C[C@@H]2C[C@H]1[C@H]({R})C2",
    "C1=CC2C1C({R})C({S})C2", "C1=CC2CC1C({R})({S})C2",
    # oxanorbornenes, norbornadienes
    "C1=CC2OC1C({R})C2{S}", "C1=CC2OC1C({R})C2", "C1=C[C@H]2O[C@@H]1[C@H]({R})[C@@H]2{S}",
    "C1=CC2C=C({R})C1C2", "C1=CC2C({R})=C({S})C1C2", "C1=CC2C=CC1C2{R}",
    # fused imides and anhydrides on norbornene / oxanorbornene
    "O=C1N({R})C(=O)C2C3C=CC(C3)C12", "O=C1N({R})C(=O)C2C3C=CC(O3)C12", "O=C1OC(=O)C2C3C=CC(C3)C12",
    "O=C1N({R})C(=O)[C@@H]2[C@H]3C=C[C@H](C3)[C@@H]12",
    # cycloalkenes C4-C12
    "C1=CC({R})C1", "C1=CCC1{R}", "C1=CCC({R})C1", "C1=CC({R})CC1", "C1=CCCC({R})C1",
    "C1=CCCCC({R})C1", "C1=C\\CCCCC({R})C/1", "C1=C/CCCCC({R})C/1", "C1=CCCC({R})CCC1",
    "C1=CCC({R})CC=CC1", "C1=CCCCCCC({R})C1", "C1=CCCCCCCC({R})C1", "C1=CCCCCCCCC({R})C1",
    "C1=CCCCCCCCCC({R})C1", "C1=C({R})CCC1", "C1=C({R})CCCCCC1",
    # heterocycles
    "C1=COCC1{R}", "C1=CCOC1{R}", "C1=COCCC1{R}", "C1=CCOCC1{R}", "C1=CCOC({R})OC1", "C1=CCN({R})C1",
    # fused, bridged tricyclic, spiro
    "C1=CC2CCC2C1{R}", "C1=CC2CCCC12{R}", "C1=CC2CCCCC12", "C1=CC2C(C1)C1C=CC2C1",
    "C1=CC2CC1C1C3CCC(C3)C21", "C1=CC2CC1C1C2CC({R})C1", "C1=CC2CC1C21CCC({R})C1", "C1=CCC2(C1)CCCC2{R}",
    "C1=CC2(CC1)OCCO2", "C1=CC2CC1c1ccccc12", "C1=CC2CC1c1cc({R})ccc12",
    # aromatics, saturated rings and acyclic controls
    "c1ccc({R})cc1", "c1cc({R})ccn1", "c1ccc2ccccc2c1", "c1cc[nH]c1{R}", "c1ccoc1{R}", "c1ccsc1{R}",
    "C1CCC({R})CC1", "C1CC2CCC1C2{R}", "C=CCCC({R})C=C", "CC#CC{R}",
    "O=C1C=CCC1{R}", "O=C1C=CC(=O)O1", "C1=CCC=C1{R}", "C1=CC=CC=CC=C1",
]

SUBSTITUENTS = [
    "[H]", "C", "CC", "CCCC", "C(C)(C)C", "c1ccccc1", "CO", "COC", "CO[Si](C)(C)C(C)(C)C",
    "C(=O)O", "C(=O)OC", "C(=O)OCC", "C#N", "CN", "CNC", "CN(C)C", "CS", "CSC", "CSC(C)=O",
    "C(F)(F)F", "F", "Cl", "Br", "CBr", "COC(=O)C(C)(C)Br", "C=O", "C(C)=O", "C(=O)N(C)C",
    "C(=O)NC", "OC(=O)C", "CC(=O)O", "CCOC=C", "CC=C", "CC#C", "CS(=O)(=O)C", "CS(N)(=O)=O",
    "CP(c1ccccc1)c1ccccc1", "CC[N+](C)(C)C", "c1ccncc1", "OCC(O)CO", "NC(=O)OC(C)(C)C",
    "[2H]", "[13CH3]", "C[15NH2]", "CC[18OH]", "C[NH3+]", "CC(=O)[O-]",
]

SALTS = ["", "", "", "", ".[Cl-]", ".[Na+]", ".[K+]", ".[Br-]", ".O", ".[Na+].[Cl-]"]


def fill(skel):
    r = random.choice(SUBSTITUENTS)
    s = random.choice(SUBSTITUENTS[:12])
    out = skel.replace("({R})", "" if r == "[H]" else "(" + r + ")")
    out = out.replace("{R}", "" if r == "[H]" else "(" + r + ")")
    out = out.replace("{S}", "" if s == "[H]" else "(" + s + ")")
    # charged substituents need a counter-ion
    charge = sum(a.GetFormalCharge() for a in (Chem.MolFromSmiles(out) or Chem.Mol()).GetAtoms()) if Chem.MolFromSmiles(out) else 0
    if charge > 0:
        out += ".[Cl-]" * charge
    elif charge < 0:
        out += ".[Na+]" * (-charge)
    else:
        out += random.choice(SALTS)
    return out


def facts(smi):
    m = Chem.MolFromSmiles(smi)
    if m is None:
        return None
    ri = m.GetRingInfo()
    bonds = {}
    for b in m.GetBonds():
        i, j = sorted((b.GetBeginAtomIdx(), b.GetEndAtomIdx()))
        bonds["%d-%d" % (i, j)] = ri.MinBondRingSize(b.GetIdx())
    return {
        "smiles": smi,
        "formula": rdMolDescriptors.CalcMolFormula(m),
        "mol_weight": round(Descriptors.MolWt(m), 5),
        "monoisotopic_mass": round(Descriptors.ExactMolWt(m), 6),
        "rings": rdMolDescriptors.CalcNumRings(m),  # symmetrized SSSR (may exceed the cyclomatic number)
        "sssr": len(Chem.GetSSSR(m)),
        # size of a minimal cycle basis = bonds - atoms + fragments (RDKit's GetSSSR can exceed it
        # for some bridged-spiro systems)
        "cyclomatic": m.GetNumBonds() - m.GetNumAtoms() + len(Chem.GetMolFrags(m)),
        "aromatic_atoms": sum(1 for a in m.GetAtoms() if a.GetIsAromatic()),
        "atoms": m.GetNumAtoms(),
        "bond_ring_size": bonds,
    }


def main():
    root = os.getcwd()
    if not os.path.isdir(os.path.join(root, "screening")):
        sys.exit("run from the repository root")
    seen = set()
    refs = []
    # every skeleton with every substituent once, then random fills
    for skel in SKELETONS:
        for r in SUBSTITUENTS:
            smi = skel.replace("({R})", "" if r == "[H]" else "(" + r + ")").replace("{R}", "" if r == "[H]" else "(" + r + ")").replace("{S}", "")
            f = facts(smi)
            if f and smi not in seen:
                seen.add(smi)
                refs.append(f)
    tries = 0
    while len(refs) < 3000 and tries < 100000:
        tries += 1
        smi = fill(random.choice(SKELETONS))
        if smi in seen:
            continue
        f = facts(smi)
        if f:
            seen.add(smi)
            refs.append(f)
    os.makedirs("testdata/reference", exist_ok=True)
    with open("testdata/reference/rdkit_reference.jsonl", "w") as fh:
        fh.write(json.dumps({"generator": "testdata/gen/gen_structures.py", "toolkit": "RDKit (Debian python3-rdkit)", "rdkit_version": Chem.rdBase.rdkitVersion, "count": len(refs)}) + "\n")
        for f in refs:
            fh.write(json.dumps(f, sort_keys=True) + "\n")
    # benchmark corpus: candidate monomers (ring olefins only), at least 10,000
    os.makedirs("testdata/corpus", exist_ok=True)
    cands = []
    monomer_skels = [s for s in SKELETONS if "=C" in s.split(".")[0] and not s.startswith("c")]
    cseen = set()
    while len(cands) < 10000:
        smi = fill(random.choice(monomer_skels))
        if smi in cseen or Chem.MolFromSmiles(smi) is None:
            continue
        cseen.add(smi)
        cands.append(smi)
    with open("testdata/corpus/candidates.smi", "w") as fh:
        fh.write("# ringsieve benchmark corpus: %d generated candidate monomers (testdata/gen/gen_structures.py)\n" % len(cands))
        for i, smi in enumerate(cands):
            fh.write("%s cand-%05d\n" % (smi, i + 1))
    print("reference structures:", len(refs), "corpus:", len(cands))


if __name__ == "__main__":
    main()
