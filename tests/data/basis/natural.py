"""Test data for natural orbitals (fractional occupations), with PySCF 2.14.

Water (our own slightly bent geometry) in 6-31G: RHF, then CISD; the natural orbitals of the
CISD one-particle density matrix with their occupations are written to natural.molden (all
orbitals, so the file has fractional occupations from ~2 down to ~1e-4), and natural.json lists
per orbital its occupation and the exact Hartree self-energy J[|phi_i|^2] of the unit-normalised
orbital density from libcint integrals.

Usage: python natural.py OUTDIR
"""
import json, os, sys
import numpy as np
from pyscf import gto, scf, ci
from pyscf.tools import molden

ATOM = "O 0.0 0.0 0.1; H 0.0 0.77 -0.46; H 0.0 -0.74 -0.47"

mol = gto.M(atom=ATOM, basis="6-31g", unit="Angstrom", verbose=0)
mf = scf.RHF(mol).run()
myci = ci.CISD(mf).run()
dm_mo = myci.make_rdm1()
occ, u = np.linalg.eigh(dm_mo)
order = np.argsort(-occ)
occ, u = occ[order], u[:, order]
c = mf.mo_coeff @ u
# Occupations above 1e-6 only are kept in the file's sense of "occupied"; write them all.
out = sys.argv[1]
molden.from_mo(mol, os.path.join(out, "natural.molden"), c, occ=occ, ene=np.zeros(len(occ)))
orbitals = []
for i in range(c.shape[1]):
    d = np.outer(c[:, i], c[:, i])
    vj = scf.hf.get_jk(mol, d, with_k=False)[0]
    orbitals.append({"index": i + 1, "occupation": float(occ[i]),
                     "hartree_self_unit": 0.5 * float(np.einsum("ij,ij", d, vj))})
ref = {"name": "natural", "source": "PySCF 2.14.0 CISD natural orbitals, libcint integrals (tests/data/basis/natural.py)",
       "units": "hartree (Eh)", "geometry_angstrom": ATOM, "basis": "6-31G", "orbitals": orbitals}
with open(os.path.join(out, "natural.json"), "w") as fh:
    json.dump(ref, fh, indent=1)
