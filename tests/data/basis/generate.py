"""Test data for the Gaussian-basis path (s to g shells, spherical and Cartesian).

Writes, with PySCF 2.14 (libcint integrals), for a tilted three-atom fragment of our own with
contracted and uncontracted d, f and g shells:
  * <case>.molden: the basis and three invented orbitals whose coefficients are all of order
    one (so every component of every shell matters), made orthonormal with the exact overlap
    (Loewdin), as a program's occupied orbitals are;
  * <case>.json: per orbital its 1-based position (`index`) and the exact Hartree
    self-energy J[n_i] = 1/2 (ii|ii) of n_i = |phi_i|^2 from libcint integrals.
Cases: `spherical` (5D 7F 9G) and `cartesian` (6D 10F 15G, same basis and orbitals as
functions of space, so the two files must give the same J).

Usage: python generate.py OUTDIR
"""
import json, os, sys
import numpy as np
from pyscf import gto, scf
from pyscf.tools import molden

ATOM = "O 0.03 -0.02 0.05; H 0.61 0.74 0.22; H -0.83 0.29 -0.41"


def basis():
    o = gto.basis.load("cc-pvdz", "O") + [
        [2, [2.7, 0.45], [0.85, 0.70]],   # contracted d
        [3, [1.3, 1.0]],                  # f
        [4, [2.1, 0.55], [0.75, 0.62]],   # contracted g
    ]
    h = gto.basis.load("cc-pvdz", "H") + [[2, [0.9, 1.0]], [3, [0.7, 1.0]]]
    return {"O": o, "H": h}


def case(outdir, name, cart):
    mol = gto.M(atom=ATOM, basis=basis(), unit="Angstrom", cart=cart, verbose=0)
    rng = np.random.default_rng(2024)
    s = mol.intor("int1e_ovlp")
    # Orbitals defined in the spherical basis and carried over to the Cartesian one, so both
    # cases describe the same functions of space.
    sph = gto.M(atom=ATOM, basis=basis(), unit="Angstrom", cart=False, verbose=0)
    c_sph = rng.uniform(-1.0, 1.0, size=(sph.nao, 3))
    c = sph.cart2sph_coeff() @ c_sph if cart else c_sph
    w, v = np.linalg.eigh(c.T @ s @ c)
    c = c @ (v @ np.diag(w ** -0.5) @ v.T)
    orbitals = []
    for i in range(c.shape[1]):
        d = np.outer(c[:, i], c[:, i])
        vj = scf.hf.get_jk(mol, d, with_k=False)[0]
        orbitals.append({"index": i + 1, "hartree_self": 0.5 * float(np.einsum("ij,ij", d, vj))})
    molden.from_mo(mol, os.path.join(outdir, name + ".molden"), c, occ=np.ones(c.shape[1]),
                   ene=-np.arange(c.shape[1], 0, -1, dtype=float))
    ref = {"name": name, "source": "PySCF 2.14.0, libcint integrals (tests/data/basis/generate.py)",
           "units": "hartree (Eh), bohr", "geometry_angstrom": ATOM, "cartesian": cart,
           "nao": int(mol.nao), "orbitals": orbitals}
    with open(os.path.join(outdir, name + ".json"), "w") as fh:
        json.dump(ref, fh, indent=1)


if __name__ == "__main__":
    out = sys.argv[1]
    case(out, "spherical", False)
    case(out, "cartesian", True)
