#!/usr/bin/env python3
"""Reference atom types, partial charges and MMFF94/MMFF94s energies from RDKit, the outside
check of ringsieve's own force field (screening/forcefield).

Run from the repository root with the Debian RDKit (apt-get install -y python3-rdkit):

    /usr/bin/python3 testdata/gen/gen_mmff.py

Writes testdata/reference/rdkit_mmff.jsonl: a header line, then one JSON object per structure:
  id, smiles, molblock (V2000 with explicit hydrogens and 3-D coordinates from RDKit's embedding),
  types (MMFF numeric atom types in molblock order), charges (MMFF partial charges), and for
  each variant (mmff94, mmff94s) the energy of each of the seven terms and the total, in
  kcal/mol. The energies are computed from the molblock as written (coordinates with four
  decimals), so that ringsieve reads exactly the geometry RDKit evaluated. Interactions between
  fragments (salts) are included.

The structures are our own: every ring class ringsieve screens (the skeletons and substituents
of gen_structures.py) and general organic molecules built from a list of functional groups and
heterocycles on a few scaffolds, seeded so the file is reproducible.
"""
import json
import os
import random
import sys

from rdkit import Chem, RDLogger
from rdkit.Chem import AllChem

sys.path.insert(0, os.path.dirname(os.path.abspath(__file__)))
import gen_structures as gs  # noqa: E402  (its skeletons and substituents)

RDLogger.DisableLog("rdApp.*")
random.seed(20261202)

# Functional groups written as substituents (attached through the first atom).
GROUPS = [
    "N", "NC", "N(C)C", "[NH3+]", "[N+](C)(C)C", "NC(=O)C", "N(C)C(=O)C", "C(=O)N", "C(=O)NC", "C(=O)N(C)C",
    "NC(=O)N", "NC(=O)OC", "OC(=O)N", "NC(N)=N", "NC(=[NH2+])N", "C(=N)N", "C(=[NH2+])N", "C#N", "[N+]#[C-]",
    "[N+](=O)[O-]", "N=O", "N=NC", "N=[N+]=[N-]", "NN", "NNC(=O)C", "C=NO", "C=NC", "C=NN", "NC=C",
    "O", "OC", "OC(=O)C", "C(=O)O", "C(=O)[O-]", "C(=O)OC", "C=O", "C(C)=O", "OC=C", "[O-]",
    "S", "SC", "SSC", "SC(=O)C", "C(=S)N", "NC(=S)N", "S(=O)C", "S(=O)(=O)C", "S(=O)(=O)N", "S(=O)(=O)NC",
    "S(=O)(=O)O", "S(=O)(=O)[O-]", "OS(=O)(=O)O", "OS(=O)(=O)[O-]", "S(=O)[O-]", "C(=O)S",
    "P(C)C", "P(=O)(C)C", "P(=O)(O)O", "OP(=O)(O)O", "OP(=O)(OC)OC", "P(=O)([O-])O", "[P+](C)(C)C", "P(OC)OC",
    "[Si](C)(C)C", "O[Si](C)(C)C", "[Si](C)(C)O[Si](C)(C)C",
    "F", "Cl", "Br", "I", "C(F)(F)F", "C(=O)Cl", "OC(F)(F)F",
    "C=C", "C#C", "C=C=C", "C=CC=C", "C(=C)C",
]

# Rings and heterocycles used whole (with a methyl or the scaffold attached at the first atom).
HETEROCYCLES = [
    "c1ccccc1", "c1ccncc1", "c1ccc[nH+]c1", "c1cnccn1", "c1cncnc1", "c1ncncn1", "c1ccc[n+]([O-])c1",
    "c1cc[nH]c1", "c1ccoc1", "c1ccsc1", "c1cnc[nH]1", "c1c[nH]cn1", "c1cn[nH]c1", "c1nnc[nH]1", "c1nn[nH]n1",
    "c1nnn[n-]1", "c1cocn1", "c1conc1", "c1cscn1", "c1c[nH+]c[nH]1", "c1ccc2[nH]ccc2c1", "c1ccc2occc2c1",
    "c1ccc2sccc2c1", "c1ccc2[nH]cnc2c1", "c1ncc2nc[nH]c2n1", "c1ccc2ncccc2c1", "c1ccc2ccccc2c1",
    "O=c1cccc[nH]1", "O=c1[nH]cccc1", "Oc1ccccc1", "Nc1ccccc1", "c1ccc(cc1)[N+](=O)[O-]",
    "C1CC1", "C1CCC1", "C1CCCC1", "C1CCCCC1", "C1CO1", "C1CN1", "O=C1CCC1", "C1=CCC1", "C1CCOC1",
    "C1CCNC1", "C1CCSC1", "O=C1CCCN1", "O=C1CCCO1", "C1COCCO1", "C1CNCCN1", "C1=CC=CC1",
]

SCAFFOLDS = ["C{G}", "CC{G}", "c1ccc(cc1){G}", "C1CCC(CC1){G}", "C1=CC2CC1C({G})C2", "C1=CCCC({G})CCC1", "CC(C){G}"]


def build():
    seen, out = set(), []

    def add(smi):
        m = Chem.MolFromSmiles(smi)
        if m is None:
            return
        can = Chem.MolToSmiles(m)
        if can in seen:
            return
        seen.add(can)
        out.append(can)

    # ring classes ringsieve screens: every skeleton with a few substituents
    for skel in gs.SKELETONS:
        subs = random.sample(gs.SUBSTITUENTS, 8)
        for r in subs:
            smi = skel.replace("({R})", "" if r == "[H]" else "(" + r + ")").replace("{R}", "" if r == "[H]" else "(" + r + ")").replace("{S}", "")
            add(smi)
    # functional groups on scaffolds
    for g in GROUPS:
        for sc in random.sample(SCAFFOLDS, 4):
            add(sc.replace("{G}", g))
    # heterocycles alone, methylated, and on scaffolds
    for h in HETEROCYCLES:
        add(h)
        add("C" + h)
        add(random.choice(SCAFFOLDS).replace("{G}", h))
    # pairs of groups on a benzene or norbornene
    for _ in range(250):
        a, b = random.sample(GROUPS, 2)
        add("c1cc(" + a + ")ccc1" + b)
        add("C1=CC2CC1C(" + a + ")C2" + b)
    # salts and zwitterions
    for s in ["C[NH3+].[Cl-]", "CC(=O)[O-].[Na+]", "C[N+](C)(C)C.[Br-]", "c1cc[nH+]cc1.[Cl-]", "[NH3+]CC(=O)[O-]",
              "C[N+](C)(C)CC(=O)[O-]", "O", "CO", "C", "CC", "C=C", "C#C", "C=O", "N#N", "[OH-].[Na+]", "[K+].[F-]",
              "C1=CC2CC1C(C[NH3+])C2.[Cl-]", "CS(=O)(=O)[O-].[Na+]", "c1ccccc1[O-].[Na+]", "CC[O-].[Li+]"]:
        add(s)
    return out


TERMS = [("bond", "SetMMFFBondTerm"), ("angle", "SetMMFFAngleTerm"), ("stretch_bend", "SetMMFFStretchBendTerm"),
         ("out_of_plane", "SetMMFFOopTerm"), ("torsion", "SetMMFFTorsionTerm"), ("van_der_waals", "SetMMFFVdWTerm"),
         ("electrostatic", "SetMMFFEleTerm")]


def energies(m, variant):
    out = {}
    for name, setter in TERMS + [("total", None)]:
        p = AllChem.MMFFGetMoleculeProperties(m, mmffVariant=variant)
        if p is None:
            return None
        for _, s in TERMS:
            getattr(p, s)(setter is None or s == setter)
        ff = AllChem.MMFFGetMoleculeForceField(m, p, ignoreInterfragInteractions=False)
        out[name] = round(ff.CalcEnergy(), 6)
    return out


def main():
    if not os.path.isdir("screening"):
        sys.exit("run from the repository root")
    smis = build()
    refs = []
    for i, smi in enumerate(smis):
        m = Chem.AddHs(Chem.MolFromSmiles(smi))
        if m.GetNumAtoms() > 150:
            continue
        p = AllChem.MMFFGetMoleculeProperties(m)
        if p is None or not AllChem.MMFFHasAllMoleculeParams(m):
            continue
        params = AllChem.ETKDGv3()
        params.randomSeed = 1000 + i
        if AllChem.EmbedMolecule(m, params) != 0:
            params.useRandomCoords = True
            if AllChem.EmbedMolecule(m, params) != 0:
                continue
        mb = Chem.MolToMolBlock(m)
        m2 = Chem.MolFromMolBlock(mb, removeHs=False)
        if m2 is None:
            continue
        p2 = AllChem.MMFFGetMoleculeProperties(m2)
        if p2 is None:
            continue
        e94, e94s = energies(m2, "MMFF94"), energies(m2, "MMFF94s")
        if e94 is None or e94s is None:
            continue
        refs.append({
            "id": "F%04d" % (len(refs) + 1), "smiles": smi, "molblock": mb,
            "types": [p2.GetMMFFAtomType(k) for k in range(m2.GetNumAtoms())],
            "charges": [round(p2.GetMMFFPartialCharge(k), 6) for k in range(m2.GetNumAtoms())],
            "mmff94": e94, "mmff94s": e94s,
        })
    with open("testdata/reference/rdkit_mmff.jsonl", "w") as fh:
        fh.write(json.dumps({"generator": "testdata/gen/gen_mmff.py", "toolkit": "RDKit (Debian python3-rdkit)",
                             "rdkit_version": Chem.rdBase.rdkitVersion, "count": len(refs)}) + "\n")
        for r in refs:
            fh.write(json.dumps(r, sort_keys=True) + "\n")
    print("structures:", len(refs))


if __name__ == "__main__":
    main()
