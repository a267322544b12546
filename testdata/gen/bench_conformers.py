#!/usr/bin/env python3
"""Side-by-side speed of ringsieve's conformer search and RDKit's 300-conformer search, on the
same molecules in one run on one core each (the speed check of issue 11; not part of CI).

Run from the repository root with the Debian RDKit (apt-get install -y python3-rdkit):

    go build -o ringsieve-bench . && /usr/bin/python3 testdata/gen/bench_conformers.py ./ringsieve-bench [N]

For the first N (default 30) structures of testdata/reference/rdkit_conformers.jsonl, one after
the other: ringsieve (`forcefield conformers --format jsonl`, one process per molecule, process
start included) and RDKit (ETKDG version 3, 300 conformers, MMFF94 optimization, one thread),
each timed on the wall clock. Prints one line per molecule, then the total times, the ratio of
the totals and the median of the per-molecule ratios, and how often ringsieve's lowest energy was
within 0.5 kcal/mol of RDKit's.
"""
import json
import os
import statistics
import subprocess
import sys
import time

from rdkit import Chem, RDLogger
from rdkit.Chem import AllChem

RDLogger.DisableLog("rdApp.*")
ROOT = os.path.dirname(os.path.dirname(os.path.dirname(os.path.abspath(__file__))))


def rdkit_search(smi):
    mh = Chem.AddHs(Chem.MolFromSmiles(smi))
    ps = AllChem.ETKDGv3()
    ps.randomSeed = 0xF00D
    ps.numThreads = 1
    AllChem.EmbedMultipleConfs(mh, 300, ps)
    res = AllChem.MMFFOptimizeMoleculeConfs(mh, maxIters=2000, numThreads=1)
    return min(e for _, e in res)


def ours(binary, smi):
    out = subprocess.run([binary, "forcefield", "conformers", "--format", "jsonl", "--max", "1", smi],
                         capture_output=True, text=True, check=True)
    return json.loads(out.stdout.splitlines()[0])["min_energy_kcal_mol"]


def main():
    binary = sys.argv[1]
    n = int(sys.argv[2]) if len(sys.argv) > 2 else 30
    rows = []
    with open(os.path.join(ROOT, "testdata", "reference", "rdkit_conformers.jsonl")) as f:
        next(f)
        for line in f:
            rows.append(json.loads(line))
    rows = rows[:n]
    t_ours, t_rd, ratios, close = 0.0, 0.0, [], 0
    for r in rows:
        t0 = time.perf_counter()
        e_ours = ours(binary, r["smiles"])
        t1 = time.perf_counter()
        e_rd = rdkit_search(r["smiles"])
        t2 = time.perf_counter()
        a, b = t1 - t0, t2 - t1
        t_ours += a
        t_rd += b
        ratios.append(b / a)
        close += e_ours - e_rd <= 0.5
        print("%s %-60s ringsieve %6.2f s %9.3f   RDKit %6.2f s %9.3f   ×%.1f" % (r["id"], r["smiles"], a, e_ours, b, e_rd, b / a), flush=True)
    print("total: ringsieve %.1f s, RDKit %.1f s; ratio of totals ×%.1f, median per molecule ×%.1f; "
          "ringsieve within 0.5 kcal/mol of RDKit's lowest for %d of %d"
          % (t_ours, t_rd, t_rd / t_ours, statistics.median(ratios), close, len(rows)))


if __name__ == "__main__":
    main()
