"""Test data for h and i shells (l = 5, 6) in the Gaussian-basis path.

Run with PySCF 2.14 (libcint integrals): python generate_high_l.py OUTDIR. For a tilted
two-atom fragment of our own (O and H positions, with added h and i shells: contracted and
uncontracted on each atom) it writes

  * high_l.molden: spherical basis (cc-pVDZ plus the h and i shells) and three invented
    orbitals with order-one coefficients on every function, made orthonormal (Loewdin) with
    the exact overlap. PySCF's molden writer refuses l >= 5 (`order_ao_index` raises "l=5 is not
    supported"), so only its `header` is used (with ignore_h=False it writes the h and i
    shells and the flags [5d] [7f] [9g]); the [MO] section is written here in the format's
    spherical order m = 0, +1, -1, ..., +l, -l (PySCF's own order is m = -l..l).
  * high_l.json: per orbital its 1-based position (`index`) and the exact Hartree
    self-energy J[n_i] = 1/2 (ii|ii) of n_i = |phi_i|^2 from libcint integrals.
  * high_l_cartesian.json: the molden format defines no Cartesian order above g, so the
    Cartesian case is a basis written out as data (centres in bohr; per shell the atom, l,
    exponents and coefficients of normalised primitives), three orbitals over the normalised
    Cartesian functions in PySCF's order (s; x, y, z; then a descending, b descending:
    xxxxx, xxxxy, xxxxz, xxxyy, ...; checked below against `Mole.cart_labels`) with
    order-one coefficients on every component, and their exact J.
"""
import json, os, sys
import numpy as np
from pyscf import gto, scf
from pyscf.tools import molden

ATOM = "O 0.04 -0.03 0.02; H 0.58 0.77 -0.26"


def spherical_basis():
    o = gto.basis.load("cc-pvdz", "O") + [
        [5, [2.3, 0.6], [0.9, 0.55]],    # contracted h
        [6, [1.4, 1.0]],                 # uncontracted i
    ]
    h = gto.basis.load("cc-pvdz", "H") + [
        [5, [0.8, 1.0]],                 # uncontracted h
        [6, [2.0, 0.5], [0.7, 0.6]],     # contracted i
    ]
    return {"O": o, "H": h}


def cartesian_basis():
    # s and p only below h, so every component order is PySCF's (no molden reordering).
    o = [[0, [5.0, 0.4], [1.1, 0.7]], [1, [1.3, 1.0]],
         [5, [2.3, 0.6], [0.9, 0.55]], [6, [1.4, 1.0]]]
    h = [[0, [0.9, 1.0]], [5, [0.8, 1.0]], [6, [2.0, 0.5], [0.7, 0.6]]]
    return {"O": o, "H": h}


def self_energies(mol, c):
    out = []
    for i in range(c.shape[1]):
        d = np.outer(c[:, i], c[:, i])
        vj = scf.hf.get_jk(mol, d, with_k=False)[0]
        out.append({"index": i + 1, "hartree_self": 0.5 * float(np.einsum("ij,ij", d, vj))})
    return out


def molden_order(mol):
    """AO indices in the format's order: p x, y, z as PySCF; spherical l >= 2 as m = 0, +1, -1, ..."""
    idx = []
    for ib in range(mol.nbas):
        l = mol.bas_angular(ib)
        for _ in range(mol.bas_nctr(ib)):
            off = len(idx)
            if l < 2:
                idx.extend(range(off, off + 2 * l + 1))
            else:
                # PySCF stores m = -l..l at off + l + m.
                order = [0] + [s * m for m in range(1, l + 1) for s in (1, -1)]
                idx.extend(off + l + m for m in order)
    return idx


def spherical_case(outdir):
    mol = gto.M(atom=ATOM, basis=spherical_basis(), unit="Angstrom", spin=1, verbose=0)
    rng = np.random.default_rng(56)
    s = mol.intor("int1e_ovlp")
    c = rng.uniform(-1.0, 1.0, size=(mol.nao, 3))
    w, v = np.linalg.eigh(c.T @ s @ c)  # orthonormal (Loewdin), as a program's orbitals are
    c = c @ (v @ np.diag(w ** -0.5) @ v.T)
    idx = molden_order(mol)
    with open(os.path.join(outdir, "high_l.molden"), "w") as fh:
        molden.header(mol, fh, ignore_h=False)
        fh.write("[MO]\n")
        for i in range(c.shape[1]):
            fh.write(" Sym= A\n Ene= %15.10g\n Spin= Alpha\n Occup= %10.5f\n" % (-3.0 + i, 1.0))
            for k, j in enumerate(idx):
                fh.write(" %3d    %18.14g\n" % (k + 1, c[j, i]))
    ref = {"name": "high_l", "source": "PySCF 2.14.0, libcint integrals (tests/data/basis/generate_high_l.py)",
           "units": "hartree (Eh), bohr", "geometry_angstrom": ATOM, "cartesian": False,
           "nao": int(mol.nao), "orbitals": self_energies(mol, c)}
    with open(os.path.join(outdir, "high_l.json"), "w") as fh:
        json.dump(ref, fh, indent=1)


def cartesian_case(outdir):
    mol = gto.M(atom=ATOM, basis=cartesian_basis(), unit="Angstrom", cart=True, spin=1, verbose=0)
    # The order claimed above: a descending, then b descending.
    for ib in range(mol.nbas):
        l = mol.bas_angular(ib)
        want = ["x" * a + "y" * b + "z" * (l - a - b) for a in range(l, -1, -1) for b in range(l - a, -1, -1)]
        p0 = mol.ao_loc_nr()[ib]
        got = [lab.split()[-1].lstrip("0123456789spdfghi") or "" for lab in mol.cart_labels()[p0:p0 + len(want)]]
        if l >= 1:
            assert got == want, (l, got, want)
    rng = np.random.default_rng(57)
    s = mol.intor("int1e_ovlp")
    c = rng.uniform(-1.0, 1.0, size=(mol.nao, 3))
    w, v = np.linalg.eigh(c.T @ s @ c)  # orthonormal (Loewdin), as a program's orbitals are
    c = c @ (v @ np.diag(w ** -0.5) @ v.T)
    # PySCF's Cartesian functions are not normalised (only x^l is): coefficients over the
    # normalised functions are c * sqrt(S_mm).
    c_normalised = c * np.sqrt(np.diag(s))[:, None]
    shells = []
    for ib in range(mol.nbas):
        shells.append({"atom": int(mol.bas_atom(ib)), "l": int(mol.bas_angular(ib)),
                       "exponents": [float(x) for x in mol.bas_exp(ib)],
                       "coefficients": [float(x) for x in mol.bas_ctr_coeff(ib)[:, 0]]})
    orbitals = self_energies(mol, c)
    for o, i in zip(orbitals, range(c.shape[1])):
        o["coefficients"] = [float(x) for x in c_normalised[:, i]]
    ref = {"name": "high_l_cartesian",
           "source": "PySCF 2.14.0, libcint integrals (tests/data/basis/generate_high_l.py)",
           "units": "hartree (Eh), bohr", "geometry_angstrom": ATOM, "cartesian": True,
           "centres_bohr": mol.atom_coords().tolist(), "shells": shells,
           "nao": int(mol.nao), "orbitals": orbitals}
    with open(os.path.join(outdir, "high_l_cartesian.json"), "w") as fh:
        json.dump(ref, fh, indent=1)


if __name__ == "__main__":
    out = sys.argv[1]
    spherical_case(out)
    cartesian_case(out)
