"""How far the shared reference's B88 and LSDA exchange self-energies are from grid convergence.

Recomputes E_x[n_i, 0] of every occupied orbital of ../shared/reference/<molecule>/orbitals.molden
(a closed-shell one: water, hydroxide, dinitrogen, lithium hydride)
with PySCF 2.14 / libxc on the reference's own Becke grid (level 8, unpruned) and on finer ones,
printing B88/LSDA per orbital beside the reference values. Not run by the tests (needs PySCF:
`pip install pyscf==2.14.0`); the README quotes its output for water.

Usage: python tools/b88_grid_convergence.py water
"""
import json, os, sys
import numpy as np
from pyscf import dft
from pyscf.tools import molden
from pyscf.dft import libxc
name = sys.argv[1]
SHARED = os.path.join(os.path.dirname(os.path.abspath(__file__)), "..", "..", "shared")
mol, mo_energy, mo_coeff, mo_occ, irrep, spins = molden.load(f"{SHARED}/reference/{name}/orbitals.molden")
ref = json.load(open(f"{SHARED}/reference/{name}/reference.json"))
occ = [i for i in range(len(mo_occ)) if mo_occ[i] > 1e-8]
def energies(grids):
    ao = dft.numint.eval_ao(mol, grids.coords, deriv=1)
    out = []
    for i in occ:
        phi = ao @ mo_coeff[:, i]
        rho = phi[0]**2; grad = 2*phi[0]*phi[1:4]
        a = np.zeros((4, rho.size)); a[0] = rho; a[1:4] = grad
        exc = libxc.eval_xc("b88,", (a, np.zeros_like(a)), spin=1, deriv=0)[0]
        exl = libxc.eval_xc("slater,", (a[0], np.zeros_like(a[0])), spin=1, deriv=0)[0]
        out.append((float(np.sum(grids.weights*rho*exc)), float(np.sum(grids.weights*rho*exl))))
    return out
for label, kw in [("level 8", dict(level=8)), ("level 9", dict(level=9)),
                  ("(250, 5810)", dict(atom_grid=(250, 5810)))]:
    g = dft.gen_grid.Grids(mol); g.prune = None
    for k, v in kw.items(): setattr(g, k, v)
    g.build()
    print(label, g.weights.size, ["%.8f/%.8f" % e for e in energies(g)], flush=True)
print("reference", ["%.8f/%.8f" % (o["b88_x"], o["lsda_x"]) for o in ref["orbitals"]])
