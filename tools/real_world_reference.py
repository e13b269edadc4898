"""Exact Hartree self-repulsion J_i = 1/2 (ii|ii) of every occupied orbital of the shared
real-world files that PySCF can load, from libcint integrals, written to
tests/data/real_world_j.json (what the Rust test `basis::wavefunction_tests` compares with).

Source: PySCF 2.14 (`pyscf.tools.molden.load` for the molden files; J from
`pyscf.scf.hf.get_jk`, i.e. libcint electron-repulsion integrals). PySCF 2.14 has no reader
for fchk, wfn or wfx files, so those are skipped (they are cross-checked against each other
and for orthonormality in the Rust tests instead).

Not run by the tests (needs PySCF: `pip install pyscf==2.14.0`).

Usage: python tools/real_world_reference.py [SHARED_REAL_WORLD_DIR] [OUTPUT_JSON]
"""
import glob
import json
import os
import sys

import numpy as np
import pyscf
from pyscf import scf
from pyscf.tools import molden

HERE = os.path.dirname(os.path.abspath(__file__))
SRC = sys.argv[1] if len(sys.argv) > 1 else os.path.join(HERE, "..", "..", "shared", "real-world")
OUT = sys.argv[2] if len(sys.argv) > 2 else os.path.join(HERE, "..", "tests", "data", "real_world_j.json")


def channel_j(mol, coeff, occ, energy, spin):
    """J of each occupied orbital of one spin channel, in the file's order."""
    rows = []
    idx = [i for i in range(len(occ)) if occ[i] > 1e-8]
    if not idx:
        return rows
    dms = np.array([np.outer(coeff[:, i], coeff[:, i]) for i in idx])
    vj = scf.hf.get_jk(mol, dms, hermi=1, with_k=False)[0]
    for k, i in enumerate(idx):
        rows.append({
            "spin": spin,
            "energy": float(energy[i]),
            "occupation": float(occ[i]),
            "j": 0.5 * float(np.einsum("ij,ij", dms[k], vj[k])),
        })
    return rows


def main():
    files = {}
    for path in sorted(glob.glob(os.path.join(SRC, "*.molden"))):
        mol, energy, coeff, occ, _irrep, _spins = molden.load(path)
        if isinstance(coeff, tuple) or np.ndim(coeff) == 3:
            rows = channel_j(mol, coeff[0], occ[0], energy[0], "alpha")
            rows += channel_j(mol, coeff[1], occ[1], energy[1], "beta")
        else:
            rows = channel_j(mol, coeff, occ, energy, "restricted")
        name = os.path.basename(path)
        files[name] = rows
        print(name, " ".join(f"{r['j']:.10f}" for r in rows))
    doc = {
        "source": f"PySCF {pyscf.__version__}: pyscf.tools.molden.load, J_i = 1/2 (ii|ii) from "
        "pyscf.scf.hf.get_jk (libcint), written by tools/real_world_reference.py; hartree",
        "skipped": "fchk, wfn, wfx: PySCF has no reader for them",
        "files": files,
    }
    with open(OUT, "w") as f:
        json.dump(doc, f, indent=1)
        f.write("\n")


if __name__ == "__main__":
    main()
